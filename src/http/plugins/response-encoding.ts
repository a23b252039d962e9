import { pipeline, type Readable } from 'node:stream'
import { promisify } from 'node:util'
import { constants, createGzip, gzip } from 'node:zlib'
import fp from 'fastify-plugin'
import type { FastifyReply } from 'fastify'

const gzipAsync = promisify(gzip)

/**
 * zlib's fastest level: answers are made per request (result pages, exports), so the API's
 * CPU matters more than the last bytes (the cost of each level in bench:e2e: bench/RESULTS.md,
 * "End to end").
 */
const GZIP_OPTIONS = { level: constants.Z_BEST_SPEED }

/**
 * Bodies smaller than this go out as they are: below about a kilobyte the gzip
 * header and the work cost more than the bytes saved (common practice; nginx's
 * gzip_min_length and most CDNs use a similar floor).
 */
export const MIN_COMPRESSED_BYTES = 1024

/** Text-like media types worth compressing; images and fonts are compressed already. */
const COMPRESSIBLE = /^(?:text\/|application\/(?:json|problem\+json|x-ndjson|ndjson|javascript|xml)|image\/svg\+xml|[a-z]+\/[a-z.+-]*\+json)/i

/**
 * True when an Accept-Encoding header accepts gzip: `gzip` (or `*`) listed with
 * a q-value above 0 and gzip not refused by `gzip;q=0` (RFC 9110 12.5.3).
 */
export function acceptsGzip(header: string | undefined): boolean {
  if (!header) return false
  let gzipQ: number | null = null
  let starQ: number | null = null
  for (const part of header.split(',')) {
    const [coding, ...params] = part.trim().toLowerCase().split(';')
    const qParam = params.map((p) => p.trim()).find((p) => p.startsWith('q='))
    const q = qParam === undefined ? 1 : Number(qParam.slice(2))
    const weight = Number.isFinite(q) ? q : 0
    if (coding === 'gzip' || coding === 'x-gzip') gzipQ = Math.max(gzipQ ?? 0, weight)
    else if (coding === '*') starQ = weight
  }
  return (gzipQ ?? starQ ?? 0) > 0
}

function addVary(reply: FastifyReply): void {
  const current = reply.getHeader('vary')
  const text = Array.isArray(current) ? current.join(', ') : current === undefined ? '' : String(current)
  if (/(^|,)\s*(accept-encoding|\*)\s*(,|$)/i.test(text)) return
  reply.header('vary', text === '' ? 'Accept-Encoding' : `${text}, Accept-Encoding`)
}

/**
 * A strong ETag names the bytes sent; the gzip bytes differ from the plain
 * ones, so the tag of a compressed answer is weakened (RFC 9110 8.8.1).
 * If-None-Match compares weakly (plugins/etag.ts), so either form still gives 304.
 */
function weakenEtag(reply: FastifyReply): void {
  const etag = reply.getHeader('etag')
  if (typeof etag === 'string' && !etag.startsWith('W/')) reply.header('etag', `W/${etag}`)
}

function isStream(payload: unknown): payload is Readable {
  return typeof payload === 'object' && payload !== null && typeof (payload as { pipe?: unknown }).pipe === 'function'
}

/**
 * Answers are gzip-compressed when the client sends `Accept-Encoding: gzip`:
 * text-like types (JSON, problem+json, CSV, NDJSON, HTML, scripts) of at least
 * MIN_COMPRESSED_BYTES, and streams (the CSV export, static files) as they flow.
 * Left alone: HEAD, 204, 206 and 304 answers, ranges, and bodies already encoded.
 * Compressible answers carry `Vary: Accept-Encoding` either way. Registered
 * after the ETag plugin, so the tag is computed on the plain body.
 */
export default fp(
  async (app) => {
    app.addHook('onSend', async (request, reply, payload) => {
      if (request.method === 'HEAD') return payload
      const status = reply.statusCode
      const wantsGzip = acceptsGzip(request.headers['accept-encoding'])
      if (status === 304) {
        // The tag a 304 confirms must be the one the 200 would have carried.
        if (wantsGzip) weakenEtag(reply)
        return payload
      }
      if (status < 200 || status === 204 || status === 206 || reply.hasHeader('content-range')) return payload
      if (reply.hasHeader('content-encoding') || payload === null || payload === undefined) return payload
      const type = reply.getHeader('content-type')
      if (typeof type !== 'string' || !COMPRESSIBLE.test(type)) return payload
      if (typeof payload === 'string' || Buffer.isBuffer(payload)) {
        const size = typeof payload === 'string' ? Buffer.byteLength(payload) : payload.length
        if (size < MIN_COMPRESSED_BYTES) return payload
        addVary(reply)
        if (!wantsGzip) return payload
        const body = await gzipAsync(payload, GZIP_OPTIONS)
        reply.header('content-encoding', 'gzip').removeHeader('content-length')
        weakenEtag(reply)
        return body
      }
      if (!isStream(payload)) return payload
      const declared = Number(reply.getHeader('content-length'))
      if (Number.isFinite(declared) && declared < MIN_COMPRESSED_BYTES) return payload
      addVary(reply)
      if (!wantsGzip) return payload
      reply.header('content-encoding', 'gzip').removeHeader('content-length')
      weakenEtag(reply)
      // pipeline: an error in the source (e.g. Redis down mid-export) destroys the gzip stream, and fastify ends the answer.
      return pipeline(payload, createGzip(GZIP_OPTIONS), () => {})
    })
  },
  { name: 'response-encoding' },
)
