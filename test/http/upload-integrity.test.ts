import { afterAll, beforeAll, describe, expect, it } from 'vitest'
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
