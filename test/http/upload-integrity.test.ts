import fc from 'fast-check'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { parseSku } from '../../src/history/cells.js'
import { Sku } from '../../src/schemas/run.js'
import { KEY_GARDEN, auth } from './gateway-double.js'
import { buildHostileApp, type HostileApp } from './hostile-helpers.js'

/**
 * Issue 14: uploads and writes never answer success for data they did not
 * store, and a refused write leaves what was stored as it was.
 */

let h: HostileApp
beforeAll(async () => {
  h = await buildHostileApp('upload-integrity', { bodyLimitBytes: 8 * 1024 * 1024 })
})
afterAll(() => h?.close())

const csv = (payload: string) =>
  h.app.inject({ method: 'POST', url: '/v1/history', headers: { ...auth(KEY_GARDEN), 'content-type': 'text/csv' }, payload })
const history = async (sku: string) => {
  const res = await h.app.inject({ url: `/v1/skus/${encodeURIComponent(sku)}/history`, headers: auth(KEY_GARDEN) })
  return res.statusCode === 200 ? res.json() : res.statusCode
}

describe('finding 3: an over-long CSV line', () => {
  // Before the fix: 200 with a few rejected "records" and none of the 20,000 good rows stored (seen failing).
  it('refuses the whole upload with a 400 that says nothing was stored, and keeps the stored history', async () => {
    const put = await h.app.inject({
      method: 'PUT',
      url: '/v1/skus/TRELLIS-2/history',
      headers: auth(KEY_GARDEN),
      payload: { frequency: 'month', firstPeriod: '2025-01', demand: [4, 5] },
    })
    expect(put.statusCode).toBe(201)
    const rows = Array.from({ length: 20_000 }, (_, i) => `TRELLIS-${i % 50},2025-03,1`).join('\n')
    const res = await csv(`sku,period,demand\nTRELLIS-1,2025-01,${'7'.repeat(70_000)}\n${rows}\n`)
    expect(res.statusCode).toBe(400)
    expect(res.json()).toMatchInlineSnapshot(`
      {
        "detail": "a record is longer than 65536 characters (wrong delimiter, or an unclosed quote?) near line 2; nothing was stored",
        "errors": [
          {
            "message": "a record is longer than 65536 characters (wrong delimiter, or an unclosed quote?) near line 2; nothing was stored",
            "path": "body",
          },
        ],
        "status": 400,
        "title": "Validation failed",
        "type": "https://almanac.example/problems/validation-failed",
      }
    `)
    expect(await history('TRELLIS-2')).toMatchObject({ firstPeriod: '2025-01', demand: [4, 5] })
    expect(await history('TRELLIS-3')).toBe(404)
  })
})

describe('finding 4: more cells than the header', () => {
  // Before the fix "1,000" was stored as 1 and the upload reported no error (seen failing).
  it('refuses the row and stores the others', async () => {
    const res = await csv('sku,period,demand\nMULCH-40L,2025-01,1,000\nMULCH-40L,2025-02,12\n')
    expect(res.statusCode).toBe(200)
    expect(res.json()).toMatchObject({
      rows: { accepted: 1, rejected: 1 },
      errors: [{ line: 2, reason: 'the row has 4 fields but the header has 3 (a thousands separator, or a delimiter in an unquoted cell?)' }],
    })
    expect(await history('MULCH-40L')).toMatchObject({ firstPeriod: '2025-02', demand: [12] })
  })
})

describe('finding 6: histories that would end after year 9999', () => {
  const LATE: Record<string, (n: number) => string> = {
    day: (n) => `9999-12-${String(32 - n).padStart(2, '0')}`,
    week: (n) => `9999-W${String(53 - n).padStart(2, '0')}`,
    month: (n) => `9999-${String(13 - n).padStart(2, '0')}`,
    quarter: (n) => `9999-Q${5 - n}`,
    year: () => '9999',
  }

  // Before the fix the PUT wrote the history and then answered 500, and every later read of the SKU,
  // alone or in a GET /v1/skus page, answered 500 (seen failing).
  it('a PUT is either stored and readable or refused before writing, never written and then failed', async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.constantFrom('day', 'week', 'month', 'quarter', 'year'),
        fc.integer({ min: 1, max: 4 }),
        fc.integer({ min: 1, max: 8 }),
        async (frequency, back, count) => {
          const sku = `LATE-${frequency}-${back}-${count}`
          const firstPeriod = LATE[frequency]!(frequency === 'week' ? back + 1 : back)
          const put = await h.app.inject({
            method: 'PUT',
            url: `/v1/skus/${sku}/history`,
            headers: auth(KEY_GARDEN),
            payload: { frequency, firstPeriod, demand: Array.from({ length: count }, () => 1) },
          })
          const read = await history(sku)
          if (put.statusCode === 201 || put.statusCode === 200) {
            expect(read).toMatchObject({ firstPeriod, periodCount: count, lastPeriod: expect.stringMatching(/^9999/) })
          } else {
            expect(put.statusCode).toBe(400)
            expect(put.json().errors).toEqual([{ path: 'demand', message: expect.stringMatching(/^the history would end after year 9999/) }])
            expect(read).toBe(404)
          }
        },
      ),
      { numRuns: 40 },
    )
    const page = await h.app.inject({ url: '/v1/skus?prefix=LATE-&limit=200', headers: auth(KEY_GARDEN) })
    expect(page.statusCode).toBe(200)
  })

  it('an upload refuses the SKU whose merged history would pass 9999 and keeps its stored history', async () => {
    const stored = await h.app.inject({
      method: 'PUT',
      url: '/v1/skus/KINDLING-9/history',
      headers: auth(KEY_GARDEN),
      payload: { frequency: 'month', firstPeriod: '9999-10', demand: [1, 2] },
    })
    expect(stored.statusCode).toBe(201)
    const res = await h.app.inject({
      method: 'POST',
      url: '/v1/history',
      headers: auth(KEY_GARDEN),
      payload: {
        series: [
          { sku: 'KINDLING-9', firstPeriod: '9999-12', demand: [3, 4] },
          { sku: 'KINDLING-10', firstPeriod: '9999-12', demand: [5] },
        ],
      },
    })
    expect(res.statusCode).toBe(200)
    expect(res.json()).toMatchObject({
      rows: { accepted: 1, rejected: 1 },
      errors: [{ item: 0, sku: 'KINDLING-9', reason: 'the history would end after year 9999 (4 month periods from 9999-10)' }],
    })
    expect(await history('KINDLING-9')).toMatchObject({ firstPeriod: '9999-10', demand: [1, 2] })
    expect(await history('KINDLING-10')).toMatchObject({ lastPeriod: '9999-12' })
  })
})

describe('finding 5: SKUs that are not well-formed Unicode', () => {
  // Any UTF-16 string, lone surrogates included.
  const utf16 = fc.string({ unit: fc.integer({ min: 0, max: 0xffff }).map((c) => String.fromCharCode(c)), minLength: 1, maxLength: 6 })
  // Node's UTF-8 codec is the oracle: a SKU is kept apart in storage exactly when it survives the round trip.
  const survivesUtf8 = (s: string) => Buffer.from(s, 'utf8').toString('utf8') === s

  it('the Sku schema accepts a SKU without control characters exactly when it survives UTF-8', () => {
    fc.assert(
      fc.property(utf16, (s) => {
        fc.pre(![...s].some((c) => c.charCodeAt(0) < 0x20 || c === '\u007f'))
        expect(Sku.safeParse(s).success).toBe(survivesUtf8(s))
        expect('sku' in parseSku(` ${s} `)).toBe(s.trim() !== '' && survivesUtf8(s))
      }),
      { numRuns: 2000 },
    )
  })

  // Before the fix the run was accepted with three SKUs and stored one result (seen failing).
  it('a run naming "\\ud800", "\\ud801" and "\\ufffd" is a 400 naming each lone surrogate', async () => {
    const series = ['\ud800', '\ud801', '\ufffd'].map((sku) => ({ sku, demand: [1, 2, 3] }))
    const res = await h.app.inject({ method: 'POST', url: '/v1/runs', headers: auth(KEY_GARDEN), payload: { horizon: 2, series } })
    expect(res.statusCode).toBe(400)
    expect(res.json().errors).toEqual([
      { path: 'series[0].sku', message: 'must not contain control characters or lone UTF-16 surrogates' },
      { path: 'series[1].sku', message: 'must not contain control characters or lone UTF-16 surrogates' },
    ])
  })

  // Before the fix all three rows were accepted and one history stored under U+FFFD (seen failing).
  it('an NDJSON upload refuses rows with a lone surrogate and keeps U+FFFD apart', async () => {
    const lines = ['\\ud800', '\\udbff', '\\ufffd'].map((sku) => `{"sku":"${sku}","period":"2025-01","demand":2}`)
    const res = await h.app.inject({
      method: 'POST',
      url: '/v1/history',
      headers: { ...auth(KEY_GARDEN), 'content-type': 'application/x-ndjson' },
      payload: lines.join('\n'),
    })
    expect(res.json()).toMatchObject({
      rows: { accepted: 1, rejected: 2 },
      skus: { created: 1 },
      errors: [
        { line: 1, column: 'sku', reason: 'SKU contains a lone UTF-16 surrogate (not well-formed Unicode)' },
        { line: 2, column: 'sku', reason: 'SKU contains a lone UTF-16 surrogate (not well-formed Unicode)' },
      ],
    })
  })
})

describe('finding 12: long SKUs by path', () => {
  // Before the fix a SKU of 101-200 characters was stored but its path answered 404 "No route" (seen failing).
  it('a SKU of any accepted length is readable by path; a longer one is a 400 naming sku', async () => {
    // Characters of 1 and 2 UTF-16 units (the limit counts units), some percent-encoded in the path.
    const char = fc.constantFrom('A', 'z', '7', '-', '/', 'Ä', '€', '🌱')
    await fc.assert(
      fc.asyncProperty(fc.integer({ min: 2, max: 200 }), char, async (length, c) => {
        const sku = c.repeat(Math.floor(length / c.length))
        const path = `/v1/skus/${encodeURIComponent(sku)}/history`
        const put = await h.app.inject({ method: 'PUT', url: path, headers: auth(KEY_GARDEN), payload: { frequency: 'year', firstPeriod: '2024', demand: [length] } })
        expect([200, 201]).toContain(put.statusCode)
        expect(await history(sku)).toMatchObject({ sku, demand: [length] })
      }),
      { numRuns: 60 },
    )
    const tooLong = await h.app.inject({ url: `/v1/skus/${'x'.repeat(201)}/history`, headers: auth(KEY_GARDEN) })
    expect(tooLong.statusCode).toBe(400)
    expect(tooLong.json().errors).toEqual([{ path: 'sku', message: expect.stringContaining('200') }])
  })

  it('a SKU of 101-200 characters stored by upload is read back by path', async () => {
    const sku = 'GREENHOUSE-FILM-'.padEnd(180, 'Z')
    const res = await h.app.inject({
      method: 'POST',
      url: '/v1/history',
      headers: auth(KEY_GARDEN),
      payload: { series: [{ sku, firstPeriod: '2025-01', demand: [3] }] },
    })
    expect(res.json().skus.created).toBe(1)
    expect(await history(sku)).toMatchObject({ sku, demand: [3] })
  })
})
