import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Redis } from 'ioredis'
import { WorklistStore } from '../../../src/storage/worklist/worklist-store.js'
import type { RunKind, WorklistEntry } from '../../../src/runs/worklist.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../../helpers/redis.js'

let url: string
let prefix: string
let redis: Redis
let store: WorklistStore

beforeAll(async () => {
  url = await redisUrlForTests()
  prefix = uniquePrefix('worklist-store')
  redis = new Redis(url, { maxRetriesPerRequest: 2 })
  store = new WorklistStore(redis, { prefix })
})
afterAll(async () => {
  redis?.disconnect()
  await deleteKeys(url, prefix)
})

const entry = (sku: string, kinds: RunKind[], extra: Partial<WorklistEntry> = {}): WorklistEntry => ({
  sku, kinds, changeRatio: null, previousRunId: null, commonPeriods: 0, failure: null, historyLength: null, ...extra,
})
const review = (runId: string) => ({ state: 'acknowledged' as const, note: 'seen', at: '2026-03-02T08:00:00.000Z', runId })

describe('WorklistStore', () => {
  it('records a run\'s entries, lists each kind and any kind by SKU, and counts them', async () => {
    await store.record('garden', 'run-a', 1000, [
      entry('RAKE', ['large-change'], { changeRatio: 0.5, previousRunId: 'run-0', commonPeriods: 3 }),
      entry('HOE', ['failed'], { failure: { code: 'empty-series', message: 'no data' } }),
      entry('SEED', ['short-history'], { historyLength: 4 }),
      entry('TROWEL', []),
    ])
    expect(await store.skusAfter('garden', 'any', null, 10)).toEqual(['HOE', 'RAKE', 'SEED'])
    expect(await store.skusAfter('garden', 'any', 'HOE', 10)).toEqual(['RAKE', 'SEED'])
    expect(await store.skusAfter('garden', 'failed', null, 10)).toEqual(['HOE'])
    expect(await store.counts('garden')).toEqual({ 'large-change': 1, failed: 1, 'short-history': 1 })
    const [rake, trowel, none] = await store.entries('garden', ['RAKE', 'TROWEL', 'NOPE'])
    expect(rake).toEqual({
      sku: 'RAKE', runId: 'run-a', createdAtMs: 1000, kinds: ['large-change'], changeRatio: 0.5, previousRunId: 'run-0',
      commonPeriods: 3, failure: null, historyLength: null,
    })
    expect(trowel?.kinds).toEqual([])
    expect(none).toBeNull()
    // Other tenants see nothing.
    expect(await store.skusAfter('heating', 'any', null, 10)).toEqual([])
  })

  it('is idempotent, a newer run clears what no longer holds, and an older run changes nothing', async () => {
    await store.record('t2', 'run-b', 2000, [entry('RAKE', ['large-change', 'short-history'])])
    expect(await store.record('t2', 'run-b', 2000, [entry('RAKE', ['large-change', 'short-history'])])).toBe(0)
    await store.setReview('t2', 'RAKE', review('run-b'))
    // The same run again keeps the review.
    await store.record('t2', 'run-b', 2000, [entry('RAKE', ['large-change', 'short-history'])])
    expect((await store.reviews('t2', ['RAKE']))[0]).toEqual(review('run-b'))
    // A late chunk of an older run is ignored.
    expect(await store.record('t2', 'run-a', 1000, [entry('RAKE', ['failed'])])).toBe(0)
    expect(await store.skusAfter('t2', 'failed', null, 10)).toEqual([])
    // A newer run without the conditions clears the SKU and its review.
    await store.record('t2', 'run-c', 3000, [entry('RAKE', [])])
    expect(await store.skusAfter('t2', 'any', null, 10)).toEqual([])
    expect(await store.counts('t2')).toEqual({ 'large-change': 0, failed: 0, 'short-history': 0 })
    expect((await store.reviews('t2', ['RAKE']))[0]).toBeNull()
    expect((await store.entries('t2', ['RAKE']))[0]?.runId).toBe('run-c')
  })

  it('orders SKUs by bytes, as every list does, and pages through many', async () => {
    const skus = Array.from({ length: 1200 }, (_, i) => `GLOVE-${String(i).padStart(4, '0')}`)
    await store.record('t3', 'run-a', 1000, skus.map((s) => entry(s, ['short-history'], { historyLength: 5 })))
    const seen: string[] = []
    let after: string | null = null
    for (;;) {
      const page = await store.skusAfter('t3', 'short-history', after, 500)
      seen.push(...page)
      if (page.length < 500) break
      after = page[page.length - 1]!
    }
    expect(seen).toEqual(skus)
  })

  it('forgets a SKU entirely', async () => {
    await store.record('t4', 'run-a', 1000, [entry('HOSE', ['failed'], { failure: { code: 'empty-series', message: 'x' } })])
    await store.setReview('t4', 'HOSE', review('run-a'))
    await store.forget('t4', 'HOSE')
    expect(await store.entries('t4', ['HOSE'])).toEqual([null])
    expect(await store.reviews('t4', ['HOSE'])).toEqual([null])
    expect(await store.skusAfter('t4', 'any', null, 10)).toEqual([])
    expect(await store.skusAfter('t4', 'failed', null, 10)).toEqual([])
  })
})
