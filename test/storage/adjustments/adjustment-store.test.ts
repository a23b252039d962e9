import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Redis } from 'ioredis'
import { AdjustmentStore, encodeAdjustment, type TrailEntry } from '../../../src/storage/adjustments/adjustment-store.js'
import type { Adjustment } from '../../../src/runs/adjustments.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../../helpers/redis.js'

let url: string
let prefix: string
let redis: Redis
let store: AdjustmentStore

beforeAll(async () => {
  url = await redisUrlForTests()
  prefix = uniquePrefix('adjustment-store')
  redis = new Redis(url, { maxRetriesPerRequest: 2 })
  store = new AdjustmentStore(redis, { prefix })
})
afterAll(async () => {
  redis?.disconnect()
  await deleteKeys(url, prefix)
})

const adj = (period: string, setDemand: number): Adjustment => ({
  period, change: { setDemand }, reason: 'r', author: 'dana', setAt: '2026-01-05T08:00:00.000Z', runId: 'run-1',
})
const entry = (period: string): TrailEntry => ({
  at: '2026-01-05T08:00:00.000Z', action: 'set', period, author: 'dana', reason: 'r', before: null, after: { setDemand: 1 },
  statisticalDemand: 2, finalDemandBefore: 2, finalDemandAfter: 1, runId: 'run-1',
})

describe('AdjustmentStore', () => {
  it('writes nothing when what was read has changed meanwhile (optimistic concurrency)', async () => {
    expect(await store.apply('garden', 'RAKE', [{ period: '2026-01', expected: null, next: adj('2026-01', 5), entry: entry('2026-01') }])).toBe(true)
    // A second writer that read "no adjustment" loses, and its trail entry is not appended.
    expect(await store.apply('garden', 'RAKE', [{ period: '2026-01', expected: null, next: adj('2026-01', 9), entry: entry('2026-01') }])).toBe(false)
    const now = await store.inForce('garden', 'RAKE')
    expect(now.get('2026-01')?.adjustment.change).toEqual({ setDemand: 5 })
    expect((await store.trail('garden', 'RAKE', 10)).items).toHaveLength(1)
    // Reading again and writing with what it read wins.
    const stored = now.get('2026-01')!.stored
    expect(stored).toBe(encodeAdjustment(adj('2026-01', 5)))
    expect(await store.apply('garden', 'RAKE', [{ period: '2026-01', expected: stored, next: null, entry: entry('2026-01') }])).toBe(true)
    expect((await store.inForce('garden', 'RAKE')).size).toBe(0)
  })

  it('finds the SKUs with adjustments among many, in the order asked, and keeps tenants apart', async () => {
    const skus = Array.from({ length: 2500 }, (_, i) => `SKU-${i}`)
    await store.apply('garden', 'SKU-7', [{ period: '2026-02', expected: null, next: adj('2026-02', 1), entry: entry('2026-02') }])
    await store.apply('garden', 'SKU-2100', [{ period: '2026-03', expected: null, next: adj('2026-03', 2), entry: entry('2026-03') }])
    const found = await store.inForceMany('garden', skus)
    expect(found).toHaveLength(2500)
    expect(found.flatMap((m, i) => (m.size > 0 ? [[skus[i], [...m.keys()]]] : []))).toEqual([
      ['SKU-7', ['2026-02']],
      ['SKU-2100', ['2026-03']],
    ])
    expect((await store.inForceMany('heating', ['SKU-7']))[0]!.size).toBe(0)
  })

  it('forgets the adjustments in force of one SKU and keeps its trail', async () => {
    await store.apply('garden', 'HOE', [{ period: '2026-04', expected: null, next: adj('2026-04', 3), entry: entry('2026-04') }])
    await store.apply('garden', 'SPADE', [{ period: '2026-04', expected: null, next: adj('2026-04', 4), entry: entry('2026-04') }])
    await store.forget('garden', 'HOE')
    expect((await store.inForce('garden', 'HOE')).size).toBe(0)
    expect((await store.inForceMany('garden', ['HOE', 'SPADE'])).map((m) => m.size)).toEqual([0, 1])
    expect((await store.trail('garden', 'HOE', 10)).items).toHaveLength(1)
  })

  it('refuses a cursor it did not issue', async () => {
    await expect(store.trail('garden', 'RAKE', 1, 'bm90LWEtY3Vyc29y.abcdefgh')).rejects.toThrow('cursor is not one this service issued')
  })
})
