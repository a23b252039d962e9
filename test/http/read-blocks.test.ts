import { Readable } from 'node:stream'
import type { FastifyRequest } from 'fastify'
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { BLOCK_BYTES, readBodyBlocks } from '../../src/http/body-threads/read-blocks.js'
import { decodeBlocks } from '../../src/http/body-threads/run-body-thread.js'

/**
 * Issue 14, finding 1: a large JSON body is gathered in blocks as it arrives
 * instead of joined in one copy at its end (which held /healthz for 220 ms at
 * 62 MiB in bench:abuse). The reference is fastify 5's raw-body reader
 * (lib/content-type-parser.js): the same bytes, the same errors.
 */

const request = (headers: Record<string, string> = {}) => ({ headers }) as unknown as FastifyRequest
const joined = (blocks: readonly Buffer[]) => Buffer.concat(blocks)

describe('readBodyBlocks', () => {
  it('gives back exactly the bytes sent, whatever the chunking (fast-check)', async () => {
    await fc.assert(
      fc.asyncProperty(fc.array(fc.uint8Array({ maxLength: 300_000 }), { maxLength: 12 }), async (chunks) => {
        const sent = Buffer.concat(chunks)
        const got = await readBodyBlocks(request({ 'content-length': String(sent.length) }), Readable.from(chunks.map((c) => Buffer.from(c))), 64 * 1024 * 1024)
        expect(got.length).toBe(sent.length)
        expect(joined(got.blocks).equals(sent)).toBe(true)
      }),
      { numRuns: 40 },
    )
  })

  it('gathers a 3.5 MiB body into blocks of at least 1 MiB that own their memory (so they move to a thread without a copy)', async () => {
    const chunk = Buffer.alloc(64 * 1024, 7)
    const chunks = Array.from({ length: 56 }, () => Buffer.from(chunk))
    const got = await readBodyBlocks(request(), Readable.from(chunks), 64 * 1024 * 1024)
    expect(got.length).toBe(56 * 64 * 1024)
    expect(got.blocks.length).toBe(4)
    for (const block of got.blocks.slice(0, 3)) {
      expect(block.length).toBeGreaterThanOrEqual(BLOCK_BYTES)
      expect(block.byteOffset === 0 && block.byteLength === block.buffer.byteLength).toBe(true)
    }
  })

  it('refuses a declared or received length past the limit with fastify\'s 413, and a length that differs from Content-Length with its 400', async () => {
    const body = () => Readable.from([Buffer.alloc(600), Buffer.alloc(600)])
    await expect(readBodyBlocks(request({ 'content-length': '5000' }), body(), 1000)).rejects.toMatchObject({ code: 'FST_ERR_CTP_BODY_TOO_LARGE', statusCode: 413 })
    await expect(readBodyBlocks(request(), body(), 1000)).rejects.toMatchObject({ code: 'FST_ERR_CTP_BODY_TOO_LARGE', statusCode: 413 })
    await expect(readBodyBlocks(request({ 'content-length': '1000' }), body(), 5000)).rejects.toMatchObject({
      code: 'FST_ERR_CTP_INVALID_CONTENT_LENGTH',
      statusCode: 400,
    })
  })

  it('a character split between two blocks is decoded whole on the thread', () => {
    const text = '{"sku":"SÄGE-€-1"}'
    const bytes = Buffer.from(text, 'utf8')
    for (let cut = 0; cut <= bytes.length; cut++) expect(decodeBlocks([bytes.subarray(0, cut), bytes.subarray(cut)])).toBe(text)
  })
})
