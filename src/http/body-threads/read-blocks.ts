import type { Readable } from 'node:stream'
import { errorCodes, type FastifyRequest } from 'fastify'

/**
 * Bytes copied into one block as a body arrives. A block of this size is its
 * own allocation (Buffer.concat takes only small sizes from the shared pool),
 * so it can be handed to a thread without a copy.
 */
export const BLOCK_BYTES = 1024 * 1024

/** A request body as blocks of about BLOCK_BYTES, in order. */
export interface BodyBlocks {
  readonly blocks: Buffer[]
  readonly length: number
}

/**
 * Read a request body with fastify's own rules for a raw body (its
 * `parseAs: 'buffer'` reader in lib/content-type-parser.js, fastify 5: the same
 * 413 past the limit, 400 on a length that differs from Content-Length, the
 * decompressed length counted against the limit), but gathered into blocks of
 * BLOCK_BYTES as the chunks arrive. Fastify joins all chunks in one copy when
 * the body ends: for a 62 MiB body that copy held the event loop for 220 ms
 * (bench:abuse, profiled). Here each copy is of one block, between arrivals.
 */
export function readBodyBlocks(request: FastifyRequest, payload: Readable, limit: number): Promise<BodyBlocks> {
  const contentLength = Number(request.headers['content-length'])
  if (contentLength > limit) return Promise.reject(new errorCodes.FST_ERR_CTP_BODY_TOO_LARGE())
  return new Promise((resolve, reject) => {
    let received = 0
    const blocks: Buffer[] = []
    let pending: Buffer[] = []
    let pendingBytes = 0
    const encodedLength = () => (payload as Readable & { receivedEncodedLength?: number }).receivedEncodedLength ?? 0
    const stop = () => {
      payload.removeListener('data', onData)
      payload.removeListener('end', onEnd)
      payload.removeListener('error', onEnd)
    }
    function onData(data: Buffer | string): void {
      // A preParsing stream (request-encoding.ts) may emit strings.
      const chunk = typeof data === 'string' ? Buffer.from(data) : data
      received += chunk.length
      // The decompressed length counts (a gzip bomb), and so does the sent one.
      if (received > limit || encodedLength() > limit) {
        stop()
        reject(new errorCodes.FST_ERR_CTP_BODY_TOO_LARGE())
        return
      }
      pending.push(chunk)
      pendingBytes += chunk.length
      if (pendingBytes >= BLOCK_BYTES) {
        blocks.push(Buffer.concat(pending, pendingBytes))
        pending = []
        pendingBytes = 0
      }
    }
    function onEnd(err?: Error & { statusCode?: number }): void {
      stop()
      if (err != null) {
        if (!(typeof err.statusCode === 'number' && err.statusCode >= 400)) err.statusCode = 400
        reject(err)
        return
      }
      if (!Number.isNaN(contentLength) && (encodedLength() || received) !== contentLength) {
        reject(new errorCodes.FST_ERR_CTP_INVALID_CONTENT_LENGTH())
        return
      }
      if (pendingBytes > 0) blocks.push(pending.length === 1 ? pending[0]! : Buffer.concat(pending, pendingBytes))
      resolve({ blocks, length: received })
    }
    payload.on('data', onData)
    payload.on('end', onEnd)
    payload.on('error', onEnd)
    payload.resume()
  })
}
