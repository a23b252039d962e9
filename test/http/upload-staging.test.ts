import { Redis } from 'ioredis'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { KEY_GARDEN, auth } from './gateway-double.js'
import { buildHostileApp, type HostileApp } from './hostile-helpers.js'

/**
 * Issue 14, finding 9: a streamed upload past UPLOAD_SPILL_BYTES keeps its rows
 * in Redis, split by SKU, instead of in the API's memory. What is stored must be
 * what the rows say, a refused upload must store nothing, and no staged key may
 * outlive the request. The expected totals are worked out here from the rows.
 */

let h: HostileApp
let redis: Redis
beforeAll(async () => {
  // The smallest threshold the setting allows (64 KiB), so a few thousand rows spill.
  h = await buildHostileApp('upload-staging', { uploadSpillBytes: 64 * 1024 })
  redis = new Redis(h.url)
})
afterAll(async () => {
  redis?.disconnect()
  await h?.close()
})

const post = (payload: string, type = 'text/csv', query = 'frequency=month') =>
  h.app.inject({ method: 'POST', url: `/v1/history?${query}`, headers: { ...auth(KEY_GARDEN), 'content-type': type }, payload })
const history = async (sku: string) => {
  const res = await h.app.inject({ url: `/v1/skus/${encodeURIComponent(sku)}/history`, headers: auth(KEY_GARDEN) })
  return res.statusCode === 200 ? (res.json() as { firstPeriod: string; demand: number[]; tags: string[] }) : res.statusCode
}
const stagedKeys = async () => (await redis.keys(`${h.prefix}:*:stage:*`)).length
const uploadLog = () => h.lines.filter((l) => l.includes('"history upload"')).map((l) => JSON.parse(l) as { stagedParts: number }).at(-1)

/** 1,500 SKUs x 4 months of dated order lines, two lines per SKU-month, in an order that scatters each SKU over the file. */
function orderLines(prefix: string): { text: string; expected: (i: number) => number[] } {
  const rows: string[] = []
  for (let round = 0; round < 2; round++) {
    for (let month = 1; month <= 4; month++) {
      for (let i = 0; i < 1500; i++) rows.push(`${prefix}-${i},2025-0${month}-1${round},${(i % 7) + month + round}`)
    }
  }
  // Month m of SKU i: (i % 7) + m from round 0 plus (i % 7) + m + 1 from round 1.
  const expected = (i: number) => [1, 2, 3, 4].map((m) => 2 * ((i % 7) + m) + 1)
  return { text: `sku,period,demand\n${rows.join('\n')}\n`, expected }
}

describe('finding 9: a large upload goes through Redis, not the API heap', () => {
  it('stores every SKU with the totals its rows add up to, and leaves no staged key behind', async () => {
    const { text, expected } = orderLines('MULCH')
    const res = await post(text)
    expect(res.statusCode).toBe(200)
    expect(res.json()).toMatchObject({ mode: 'add', rows: { accepted: 12_000, rejected: 0 }, skus: { created: 1500, rejected: 0 } })
    expect(uploadLog()?.stagedParts).toBeGreaterThan(1)
    for (const i of [0, 1, 6, 7, 777, 1499]) expect(await history(`MULCH-${i}`)).toMatchObject({ firstPeriod: '2025-01', demand: expected(i) })
    expect(await stagedKeys()).toBe(0)
  })

  it('refuses the whole upload on an over-long record after it spilled: nothing stored, nothing staged left', async () => {
    const { text } = orderLines('PELLET')
    const res = await post(`${text}PELLET-1,2025-05-01,${'9'.repeat(70_000)}\n`)
    expect(res.statusCode).toBe(400)
    expect(res.json().detail).toContain('nothing was stored')
    expect(await history('PELLET-1')).toBe(404)
    expect(await history('PELLET-1499')).toBe(404)
    expect(await stagedKeys()).toBe(0)
  })

  it('refuses a spilled upload that mixes dated and period rows without a mode, naming mode, and stores nothing', async () => {
    const { text } = orderLines('COVERALL')
    const res = await post(`${text}COVERALL-1,2025-05,3\n`)
    expect(res.statusCode).toBe(400)
    expect(res.json().errors).toEqual([{ path: 'mode', message: expect.stringContaining('12000 dated row(s)') }])
    expect(await history('COVERALL-0')).toBe(404)
    expect(await stagedKeys()).toBe(0)
  })

  it('NDJSON: a SKU given as a series and again as rows far apart in the file is refused once, the rest stored', async () => {
    const lines = [JSON.stringify({ sku: 'FLUE-0', firstPeriod: '2025-01', demand: [5, 6] })]
    for (let i = 1; i < 3000; i++) lines.push(JSON.stringify({ sku: `FLUE-${i}`, period: '2025-01', demand: i, tags: ['category:heating'] }))
    lines.push(JSON.stringify({ sku: 'FLUE-0', period: '2025-03', demand: 1 }))
    const res = await post(lines.join('\n'), 'application/x-ndjson')
    expect(res.statusCode).toBe(200)
    expect(res.json()).toMatchObject({ rows: { accepted: 3000, rejected: 1 }, skus: { created: 3000 } })
    expect(res.json().errors).toEqual([{ line: 3001, sku: 'FLUE-0', reason: 'SKU was already given as a whole series on line 1' }])
    expect(uploadLog()?.stagedParts).toBeGreaterThan(1)
    expect(await history('FLUE-0')).toMatchObject({ demand: [5, 6] })
    expect(await history('FLUE-2999')).toMatchObject({ demand: [2999], tags: ['category:heating'] })
    expect(await stagedKeys()).toBe(0)
  })
})
