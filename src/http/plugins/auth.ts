import { createHash, timingSafeEqual } from 'node:crypto'
import fp from 'fastify-plugin'
import type { FastifyRequest } from 'fastify'
import { ProblemError } from '../../errors.js'

export const DEFAULT_TENANT = 'default'

interface KeyEntry {
  readonly tenant: string
  readonly digest: Buffer
}

/** True for routes that answer without a key: health, metrics and the API docs. */
function isPublic(request: FastifyRequest): boolean {
  if (request.routeOptions.config?.auth === false) return true
  const url = request.routeOptions.url
  return url !== undefined && (url === '/docs' || url.startsWith('/docs/'))
}

/**
 * `Authorization: Bearer <key>` -> tenant. The presented key is hashed with
 * SHA-256 and compared with every configured digest in constant time, so
 * neither the match nor its position leaks through timing.
 * Without configured keys every request is tenant `default`.
 */
export default fp(
  async (app) => {
    const entries: KeyEntry[] = []
    for (const [tenant, digests] of app.config.apiKeys) {
      for (const hex of digests) entries.push({ tenant, digest: Buffer.from(hex, 'hex') })
    }
    const authOff = entries.length === 0

    app.decorateRequest('tenant', '')
    app.addHook('onRequest', async (request, reply) => {
      if (authOff) {
        request.tenant = DEFAULT_TENANT
        request.log = request.log.child({ tenant: DEFAULT_TENANT })
        reply.log = request.log
        return
      }
      if (isPublic(request)) return
      const match = /^Bearer +(\S+) *$/i.exec(request.headers.authorization ?? '')
      if (!match) {
        throw new ProblemError('unauthorized', 'Send an API key as Authorization: Bearer <key>', undefined, {
          'www-authenticate': 'Bearer realm="almanac"',
        })
      }
      const presented = createHash('sha256').update(match[1] ?? '', 'utf8').digest()
      let tenant: string | undefined
      for (const entry of entries) {
        const equal = entry.digest.length === presented.length && timingSafeEqual(entry.digest, presented)
        if (equal && tenant === undefined) tenant = entry.tenant
      }
      if (tenant === undefined) {
        throw new ProblemError('unauthorized', 'The API key is not valid', undefined, {
          'www-authenticate': 'Bearer realm="almanac", error="invalid_token"',
        })
      }
      request.tenant = tenant
      request.log = request.log.child({ tenant })
      reply.log = request.log
    })
  },
  { name: 'auth', dependencies: ['config'] },
)
