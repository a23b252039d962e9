import { createHash } from 'node:crypto'
import fp from 'fastify-plugin'

declare module 'fastify' {
  interface FastifyContextConfig {
    /** GET answers carry a strong ETag and honour If-None-Match. */
    etag?: boolean
  }
}

/** True when an If-None-Match value matches the tag (weak comparison, RFC 9110 13.1.2). */
export function noneMatch(header: string | undefined, etag: string): boolean {
  if (header === undefined) return false
  if (header.trim() === '*') return true
  const opaque = etag.replace(/^W\//, '')
  return header.split(',').some((t) => t.trim().replace(/^W\//, '') === opaque)
}

/**
 * On routes with `config.etag`: a 200 answer gets `ETag: "<sha256 of the body, base64url>"`
 * (strong: any byte change changes it); a request whose If-None-Match matches gets 304 with no body.
 */
export default fp(
  async (app) => {
    app.addHook('onSend', async (request, reply, payload) => {
      if (request.routeOptions.config?.etag !== true || reply.statusCode !== 200) return payload
      if (request.method !== 'GET' && request.method !== 'HEAD') return payload
      if (typeof payload !== 'string' && !Buffer.isBuffer(payload)) return payload
      const etag = `"${createHash('sha256').update(payload).digest('base64url')}"`
      reply.header('etag', etag)
      const given = request.headers['if-none-match']
      if (!noneMatch(typeof given === 'string' ? given : undefined, etag)) return payload
      reply.code(304)
      reply.removeHeader('content-type')
      reply.removeHeader('content-length')
      return ''
    })
  },
  { name: 'etag' },
)
