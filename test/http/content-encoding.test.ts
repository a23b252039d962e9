import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Readable } from 'node:stream'
import { createGzip, gunzipSync, gzipSync } from 'node:zlib'
import { KEY_GARDEN, auth } from './gateway-double.js'
import { buildHistoryApp, type HistoryApp } from './history-helpers.js'
import { acceptsGzip, MIN_COMPRESSED_BYTES } from '../../src/http/plugins/response-encoding.js'
import { gunzipBounded } from '../../src/http/plugins/request-encoding.js'

// Gzip request bodies (decompressed as a stream, bounded) and gzip answers.
// Gzip format: RFC 1952; node:zlib makes and reads the test bodies.
const LIMIT = 64 * 1024
let h: HistoryApp
beforeAll(async () => {
  h = await buildHistoryApp('http-content-encoding', { bodyLimitBytes: LIMIT })
})
afterAll(() => h?.close())

const gz = (text: string) => gzipSync(Buffer.from(text, 'utf8'))
const post = (url: string, type: string, payload: Buffer | string, encoding?: string) =>
  h.app.inject({
    method: 'POST',
    url,
    headers: { ...auth(KEY_GARDEN), 'content-type': type, ...(encoding === undefined ? {} : { 'content-encoding': encoding }) },
    payload,
  })
const stored = async (sku: string) => (await h.app.inject({ url: `/v1/skus/${sku}/history`, headers: auth(KEY_GARDEN) })).json()

describe('gzip request bodies', () => {
  it('reads a gzip JSON body (PUT of one history)', async () => {
    const body = JSON.stringify({ frequency: 'month', firstPeriod: '2025-01', demand: [4, 5, 6] })
    const res = await h.app.inject({
      method: 'PUT',
      url: '/v1/skus/GZ-TROWEL/history',
      headers: { ...auth(KEY_GARDEN), 'content-type': 'application/json', 'content-encoding': 'gzip' },
      payload: gz(body),
    })
    expect(res.statusCode).toBe(201)
    expect(await stored('GZ-TROWEL')).toMatchObject({ firstPeriod: '2025-01', demand: [4, 5, 6] })
  })

  it('streams gzip CSV and NDJSON uploads as plain ones', async () => {
    const csv = 'sku,period,demand\r\nGZ-HOSE,2025-01,7\r\nGZ-HOSE,2025-02,8\r\n'
    const a = await post('/v1/history', 'text/csv', gz(csv), 'gzip')
    expect(a.statusCode).toBe(200)
    expect(a.json()).toMatchObject({ rows: { accepted: 2, rejected: 0 } })
    expect(await stored('GZ-HOSE')).toMatchObject({ firstPeriod: '2025-01', demand: [7, 8] })
    const ndjson = '{"sku":"GZ-GLOVE","period":"2025-03","demand":2}\n{"sku":"GZ-GLOVE","period":"2025-04","demand":3}\n'
    const b = await post('/v1/history', 'application/x-ndjson', gz(ndjson), 'x-gzip')
    expect(b.statusCode).toBe(200)
    expect(await stored('GZ-GLOVE')).toMatchObject({ firstPeriod: '2025-03', demand: [2, 3] })
  })

  it('decompresses a body without Content-Length (streamed by the client), and leaves an empty body empty', async () => {
    const res = await h.app.inject({
      method: 'POST',
      url: '/v1/history',
      headers: { ...auth(KEY_GARDEN), 'content-type': 'text/csv', 'content-encoding': 'gzip' },
      payload: Readable.from([gz('sku,period,demand\r\nGZ-STREAMED,2025-05,9\r\n')]),
    })
    expect(res.statusCode).toBe(200)
    expect(await stored('GZ-STREAMED')).toMatchObject({ firstPeriod: '2025-05', demand: [9] })
    // Content-Length: 0 with a JSON type: no body in any coding (routes that need one say so by schema).
    const empty = await h.app.inject({
      method: 'DELETE',
      url: '/v1/skus/GZ-STREAMED/history',
      headers: { ...auth(KEY_GARDEN), 'content-type': 'application/json', 'content-encoding': 'gzip', 'content-length': '0' },
    })
    expect(empty.statusCode).toBe(204)
  })

  it('replays a gzip upload by Idempotency-Key: the key covers the decompressed body', async () => {
    const csv = 'sku,period,demand\r\nGZ-LADDER,2025-01-03,2\r\n'
    const send = (payload: Buffer | string, encoding?: string) =>
      h.app.inject({
        method: 'POST',
        url: '/v1/history',
        headers: { ...auth(KEY_GARDEN), 'content-type': 'text/csv', 'idempotency-key': 'gz-ladder-1', ...(encoding ? { 'content-encoding': encoding } : {}) },
        payload,
      })
    const first = await send(gz(csv), 'gzip')
    expect(first.statusCode).toBe(200)
    const again = await send(gz(csv), 'gzip')
    expect(again.headers['almanac-reused-answer']).toBe('true')
    const plain = await send(csv)
    expect(plain.headers['almanac-reused-answer']).toBe('true')
    // Added once (mode add for dated rows), not three times.
    expect(await stored('GZ-LADDER')).toMatchObject({ demand: [2] })
  })

  it('refuses a gzip bomb with 413 naming the limit, for JSON and streamed bodies alike, storing nothing', async () => {
    // 8 MiB of blanks compress to about 8 KiB: far below the limit on the wire, 128 times it once inflated.
    const bomb = gzipSync(Buffer.alloc(8 * 1024 * 1024, ' '))
    expect(bomb.length).toBeLessThan(LIMIT)
    const json = gzipSync(Buffer.concat([Buffer.from('{"series":[{"sku":"GZ-BOMB","firstPeriod":"2025-01","demand":[1]}]'), Buffer.alloc(8 * 1024 * 1024, ' '), Buffer.from('}')]))
    const csv = gzipSync(Buffer.concat([Buffer.from('sku,period,demand\r\nGZ-BOMB,2025-01,1\r\n'), Buffer.alloc(8 * 1024 * 1024, '\n')]))
    for (const [type, payload] of [['application/json', json], ['text/csv', csv], ['application/json', bomb]] as const) {
      const res = await post('/v1/history', type, payload, 'gzip')
      expect(res.statusCode, type).toBe(413)
      expect(res.headers['content-type']).toContain('application/problem+json')
      expect(res.json()).toMatchObject({ type: 'https://almanac.example/problems/payload-too-large', detail: expect.stringContaining(`${LIMIT} bytes`) })
    }
    const res = await h.app.inject({ url: '/v1/skus/GZ-BOMB/history', headers: auth(KEY_GARDEN) })
    expect(res.statusCode).toBe(404)
  })

  it('answers corrupt gzip with 400 naming Content-Encoding, and stores nothing', async () => {
    const good = gz('sku,period,demand\r\nGZ-BROKEN,2025-01,1\r\n')
    const broken = Buffer.concat([good.subarray(0, 10), Buffer.from('not deflate data at all'), good.subarray(10)])
    for (const type of ['text/csv', 'application/json']) {
      const res = await post('/v1/history', type, broken, 'gzip')
      expect(res.statusCode, type).toBe(400)
      expect(res.json()).toMatchObject({ type: 'https://almanac.example/problems/bad-request', errors: [{ path: 'Content-Encoding' }] })
    }
    // Plain bytes labelled gzip are corrupt gzip too.
    const plain = await post('/v1/history', 'text/csv', 'sku,period,demand\r\nGZ-BROKEN,2025-01,1\r\n', 'gzip')
    expect(plain.statusCode).toBe(400)
    expect((await h.app.inject({ url: '/v1/skus/GZ-BROKEN/history', headers: auth(KEY_GARDEN) })).statusCode).toBe(404)
  })

  it('answers other content codings with 415 naming Content-Encoding; identity is no coding', async () => {
    const csv = 'sku,period,demand\r\nGZ-RAKE,2025-01,1\r\n'
    for (const coding of ['br', 'deflate', 'gzip, br', 'compress']) {
      const res = await post('/v1/history', 'text/csv', csv, coding)
      expect(res.statusCode, coding).toBe(415)
      expect(res.json()).toMatchObject({ type: 'https://almanac.example/problems/unsupported-media-type', errors: [{ path: 'Content-Encoding' }] })
    }
    expect((await post('/v1/history', 'text/csv', csv, 'identity')).statusCode).toBe(200)
    // A request without a body has nothing to decode.
    const read = await h.app.inject({ url: '/v1/skus/GZ-RAKE/history', headers: { ...auth(KEY_GARDEN), 'content-encoding': 'br' } })
    expect(read.statusCode).toBe(200)
  })
})

describe('gzip answers', () => {
  // 400 months: the JSON history is a few kilobytes, above the compression floor.
  const demand = Array.from({ length: 400 }, (_, i) => (i * 37) % 101)
  beforeAll(async () => {
    const res = await h.app.inject({
      method: 'PUT',
      url: '/v1/skus/GZ-BIG/history',
      headers: auth(KEY_GARDEN),
      payload: { frequency: 'month', firstPeriod: '1990-01', demand },
    })
    expect(res.statusCode).toBe(201)
  })
  const get = (url: string, headers: Record<string, string> = {}) => h.app.inject({ url, headers: { ...auth(KEY_GARDEN), ...headers } })

  it('compresses a large JSON answer for a client that accepts gzip, with Vary and a weak ETag that still gives 304', async () => {
    const plain = await get('/v1/skus/GZ-BIG/history')
    expect(plain.statusCode).toBe(200)
    expect(plain.headers['content-encoding']).toBeUndefined()
    expect(plain.rawPayload.length).toBeGreaterThan(MIN_COMPRESSED_BYTES)
    expect(plain.headers.vary).toMatch(/accept-encoding/i)
    const strong = plain.headers.etag as string
    expect(strong).toMatch(/^"/)

    const zipped = await get('/v1/skus/GZ-BIG/history', { 'accept-encoding': 'gzip, deflate' })
    expect(zipped.statusCode).toBe(200)
    expect(zipped.headers['content-encoding']).toBe('gzip')
    expect(zipped.headers.vary).toMatch(/accept-encoding/i)
    expect(zipped.rawPayload.length).toBeLessThan(plain.rawPayload.length)
    expect(gunzipSync(zipped.rawPayload).toString('utf8')).toBe(plain.payload)
    expect(zipped.headers.etag).toBe(`W/${strong}`)

    // Either tag revalidates either variant (If-None-Match compares weakly); the 304 carries the variant's tag.
    const again = await get('/v1/skus/GZ-BIG/history', { 'accept-encoding': 'gzip', 'if-none-match': zipped.headers.etag as string })
    expect(again.statusCode).toBe(304)
    expect(again.rawPayload.length).toBe(0)
    expect(again.headers.etag).toBe(`W/${strong}`)
    const plainAgain = await get('/v1/skus/GZ-BIG/history', { 'if-none-match': zipped.headers.etag as string })
    expect(plainAgain.statusCode).toBe(304)
    expect(plainAgain.headers.etag).toBe(strong)
  })

  it('stores the plain answer for Idempotency-Key replays: the replay is compressed for this client, plain for another', async () => {
    // 40 bad rows: the report lists each, well above the compression floor.
    const csv = ['sku,period,demand', ...Array.from({ length: 40 }, (_, i) => `GZ-REPLAY-${i},2025-01,not-a-number`)].join('\n')
    const send = (headers: Record<string, string>) =>
      h.app.inject({
        method: 'POST',
        url: '/v1/history',
        headers: { ...auth(KEY_GARDEN), 'content-type': 'text/csv', 'idempotency-key': 'gz-replay-1', ...headers },
        payload: csv,
      })
    const first = await send({ 'accept-encoding': 'gzip' })
    expect(first.statusCode).toBe(200)
    expect(first.headers['content-encoding']).toBe('gzip')
    const report = JSON.parse(gunzipSync(first.rawPayload).toString('utf8'))
    expect(report.rows).toEqual({ accepted: 0, rejected: 40 })
    const replay = await send({ 'accept-encoding': 'gzip' })
    expect(replay.headers['almanac-reused-answer']).toBe('true')
    expect(JSON.parse(gunzipSync(replay.rawPayload).toString('utf8'))).toEqual(report)
    const plain = await send({})
    expect(plain.headers['almanac-reused-answer']).toBe('true')
    expect(plain.headers['content-encoding']).toBeUndefined()
    expect(plain.json()).toEqual(report)
  })

  it('leaves small answers, refused gzip and HEAD alone', async () => {
    await h.app.inject({ method: 'PUT', url: '/v1/skus/GZ-SMALL/history', headers: auth(KEY_GARDEN), payload: { frequency: 'month', firstPeriod: '2025-01', demand: [1] } })
    const small = await get('/v1/skus/GZ-SMALL/history', { 'accept-encoding': 'gzip' })
    expect(small.statusCode).toBe(200)
    expect(small.rawPayload.length).toBeLessThan(MIN_COMPRESSED_BYTES)
    expect(small.headers['content-encoding']).toBeUndefined()
    expect(small.json()).toMatchObject({ demand: [1] })
    const refused = await get('/v1/skus/GZ-BIG/history', { 'accept-encoding': 'gzip;q=0, identity' })
    expect(refused.headers['content-encoding']).toBeUndefined()
    expect(refused.json()).toMatchObject({ sku: 'GZ-BIG' })
  })

  it('compresses a large problem body too', async () => {
    // 400 bad demand values: the 400 answer lists 100 field errors, well above the floor.
    const res = await h.app.inject({
      method: 'PUT',
      url: '/v1/skus/GZ-BAD/history',
      headers: { ...auth(KEY_GARDEN), 'accept-encoding': 'gzip' },
      payload: { frequency: 'month', firstPeriod: '2025-01', demand: Array.from({ length: 400 }, () => 'many') },
    })
    expect(res.statusCode).toBe(400)
    expect(res.headers['content-type']).toContain('application/problem+json')
    expect(res.headers['content-encoding']).toBe('gzip')
    expect(JSON.parse(gunzipSync(res.rawPayload).toString('utf8'))).toMatchObject({ status: 400, errors: expect.arrayContaining([expect.objectContaining({ path: 'demand[0]' })]) })
  })
})

describe('acceptsGzip (RFC 9110 12.5.3)', () => {
  it.each([
    ['gzip', true],
    ['gzip, deflate, br', true],
    ['br;q=1.0, gzip;q=0.5', true],
    ['*', true],
    ['identity', false],
    ['gzip;q=0', false],
    ['*;q=0.5, gzip;q=0', false],
    ['', false],
  ])('%j -> %s', (header, expected) => {
    expect(acceptsGzip(header)).toBe(expected)
  })
})

describe('gunzipBounded', () => {
  it('stops inflating an endless gzip stream at the limit (it would never end otherwise)', async () => {
    let produced = 0
    const endless = new Readable({
      read() {
        produced += 64 * 1024
        this.push(Buffer.alloc(64 * 1024))
      },
    })
    const out = gunzipBounded(endless.pipe(createGzip()), LIMIT)
    let received = 0
    const failure = await new Promise<unknown>((resolve) => {
      out.on('data', (chunk: Buffer) => {
        received += chunk.length
      })
      out.on('error', resolve)
      out.on('end', () => resolve(null))
    })
    endless.destroy()
    expect(failure).toMatchObject({ slug: 'payload-too-large', statusCode: 413 })
    expect(received).toBeLessThanOrEqual(LIMIT)
    // Reading stopped near the limit: what stream buffers held (zeros compress about 1000:1, so a few
    // kilobytes of gzip in flight are megabytes of zeros), not the endless source.
    expect(produced).toBeLessThan(256 * LIMIT)
  })
})
