import { Transform, type Readable } from 'node:stream'
import { createGunzip } from 'node:zlib'
import fp from 'fastify-plugin'
import { ProblemError } from '../../errors.js'

/** Content codings a request body may carry (RFC 9110 8.4.1); `x-gzip` is gzip's old alias. */
const GZIP = new Set(['gzip', 'x-gzip'])

/**
 * The decompressed body as a stream, failing with a 413 problem once more than
 * `maxBytes` have come out, and with a 400 problem when the gzip data is corrupt.
 * `receivedEncodedLength` counts the bytes as sent, so fastify's Content-Length
 * check compares like with like.
 */
export function gunzipBounded(source: Readable, maxBytes: number): Readable & { receivedEncodedLength: number } {
  const gunzip = createGunzip()
  let out = 0
  const bounded = new Transform({
    transform(chunk: Buffer, _enc, done) {
      out += chunk.length
      if (out > maxBytes) {
        // Stop reading and inflating at once: a small gzip bomb must not cost the CPU (or memory) of its full size.
        source.removeListener('data', countEncoded)
        source.unpipe(gunzip)
        gunzip.destroy()
        done(tooLarge(maxBytes))
      } else done(null, chunk)
    },
  }) as Transform & { receivedEncodedLength: number }
  bounded.receivedEncodedLength = 0
  function countEncoded(chunk: Buffer): void {
    bounded.receivedEncodedLength += chunk.length
  }
  source.on('data', countEncoded)
  source.on('error', (err) => bounded.destroy(err))
  // Corrupt gzip: the rest of the body cannot be read as the client meant it, so the connection closes too.
  gunzip.on('error', (err) => {
    const errors = [{ path: 'Content-Encoding', message: 'the body is not valid gzip data' }]
    bounded.destroy(new ProblemError('bad-request', `The gzip body cannot be decompressed (${err.message})`, errors, { connection: 'close' }))
  })
  // The reader (fastify's body parser, or an upload's stream) gets the error too; this one only keeps
  // an unread stream's failure from becoming an uncaught exception.
  bounded.on('error', () => {})
  source.pipe(gunzip).pipe(bounded)
  return bounded
}

function tooLarge(maxBytes: number): ProblemError {
  return new ProblemError('payload-too-large', `The request body is larger than ${maxBytes} bytes once decompressed`, undefined, {
    connection: 'close',
  })
}

/**
 * Request bodies sent with `Content-Encoding: gzip` are decompressed as a
 * stream before any parser sees them (JSON bodies and streamed CSV/NDJSON
 * uploads alike), bounded by the route's body limit in decompressed bytes.
 * `identity` is the same as no header; any other coding on a body is a 415 naming the header.
 */
export default fp(
  async (app) => {
    app.addHook('preParsing', async (request, _reply, payload) => {
      const header = request.headers['content-encoding']
      if (header === undefined) return payload
      const coding = header.trim().toLowerCase()
      // Without a body there is nothing to decode, whatever the header says.
      if (coding === '' || coding === 'identity' || !hasBody(request.method, request.headers)) return payload
      if (!GZIP.has(coding)) {
        throw new ProblemError(
          'unsupported-media-type',
          `Content-Encoding ${JSON.stringify(header.slice(0, 40))} is not supported; send gzip or no Content-Encoding`,
          [{ path: 'Content-Encoding', message: 'must be gzip or identity' }],
          { connection: 'close' },
        )
      }
      return gunzipBounded(payload, request.routeOptions.bodyLimit ?? app.config.bodyLimitBytes)
    })
  },
  { name: 'request-encoding', dependencies: ['config'] },
)

/** Methods fastify never reads a body for. */
const BODYLESS = new Set(['GET', 'HEAD', 'TRACE'])

/**
 * True when fastify will read a body, as it decides (a content type, chunked
 * transfer or a non-zero length on a method that may carry one). An empty body
 * is empty in any coding, so it is left as it is.
 */
function hasBody(method: string, headers: Readonly<Record<string, unknown>>): boolean {
  if (BODYLESS.has(method)) return false
  const length = headers['content-length']
  if (length === '0') return false
  return headers['content-type'] !== undefined || headers['transfer-encoding'] !== undefined || length !== undefined
}
