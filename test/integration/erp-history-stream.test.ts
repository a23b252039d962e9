import { Readable } from 'node:stream'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { KEY_GARDEN, auth } from '../http/gateway-double.js'
import { buildHistoryApp, type HistoryApp } from '../http/history-helpers.js'

// A large CSV upload streamed through POST /v1/history: generated lazily, never held whole.
const SKUS = 500
const DAYS = 400 // 2024-01-01 .. 2025-02-03
const ROWS = SKUS * DAYS // 200,000 rows

let h: HistoryApp
beforeAll(async () => {
  h = await buildHistoryApp('erp-history-stream', { bodyLimitBytes: 64 * 1024 * 1024 })
})
afterAll(() => h?.close())

const DAY_MS = 86_400_000
const START_MS = Date.UTC(2024, 0, 1)
const sku = (i: number) => `BULK-${String(i).padStart(4, '0')}`
/** Quantity of SKU i on day d: small integers, so sums are exact. */
const demand = (i: number, d: number) => ((i * 7 + d * 3) % 11) + 1

function* csvChunks(): Generator<string> {
  yield 'sku,period,demand\n'
  for (let d = 0; d < DAYS; d++) {
    const date = new Date(START_MS + d * DAY_MS).toISOString().slice(0, 10)
    let chunk = ''
    for (let i = 0; i < SKUS; i++) chunk += `${sku(i)},${date},${demand(i, d)}\n`
    yield chunk
  }
}

describe('a 200,000-row CSV upload', () => {
  // Memory is measured by `npm run bench:history` (heap growth per upload size), not here:
  // at this size GC timing, not the upload, decides the heap figures.
  it('streams into exact monthly sums', async () => {
    const res = await h.app.inject({
      method: 'POST',
      url: '/v1/history?frequency=month&mode=replace',
      headers: { ...auth(KEY_GARDEN), 'content-type': 'text/csv' },
      payload: Readable.from(csvChunks()),
    })
    expect(res.statusCode).toBe(200)
    expect(res.json()).toMatchObject({ rows: { accepted: ROWS, rejected: 0 }, skus: { created: SKUS, rejected: 0 } })

    // Expected monthly sums computed here from the same generator rule, day by day.
    for (const i of [0, 123, 499]) {
      const sums = new Map<string, number>()
      for (let d = 0; d < DAYS; d++) {
        const month = new Date(START_MS + d * DAY_MS).toISOString().slice(0, 7)
        sums.set(month, (sums.get(month) ?? 0) + demand(i, d))
      }
      const stored = (await h.app.inject({ url: `/v1/skus/${sku(i)}/history`, headers: auth(KEY_GARDEN) })).json()
      expect(stored.firstPeriod).toBe('2024-01')
      expect(stored.lastPeriod).toBe('2025-02')
      expect(stored.demand).toEqual([...sums.values()])
    }
  }, 120_000)
})
