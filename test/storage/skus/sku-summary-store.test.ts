import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Redis } from 'ioredis'
import { parsePeriod, type ModelName } from '../../../src/engine/index.js'
import type { ResultItem } from '../../../src/runs/contract.js'
import { tallyItems } from '../../../src/runs/tally.js'
import { mergeHistory } from '../../../src/history/merge.js'
import { HistoryStore } from '../../../src/storage/histories/history-store.js'
import { prepareItems } from '../../../src/storage/items/prepared-item.js'
import { exceptionsKey } from '../../../src/storage/keys.js'
import { RunStore } from '../../../src/storage/runs/run-store.js'
import { MAX_EXAMINED } from '../../../src/storage/skus/sku-list.js'
import { CursorError, encodeCursor } from '../../../src/storage/paging.js'
import { summaryKeys } from '../../../src/storage/skus/sku-summary-store.js'
import { runRequest, syntheticSeries } from '../../queue/fixtures.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../../helpers/redis.js'

let url: string
let prefix: string
let redis: Redis
let runs: RunStore
let histories: HistoryStore
const T = 'garden'

/** A forecast item of the invented distributor, chosen on a holdout ranked by MASE. */
const ok = (sku: string, model: ModelName, mase: number, warnings: string[] = []): ResultItem => ({
  sku,
  frequency: 'month',
  model,
  family: 'level',
  params: {},
  modelChoice: { method: 'holdout', rankBy: 'mase', holdoutPeriods: 6, holdoutOrigins: 1 },
  holdoutErrors: { mae: 1, rmse: 1, mape: 10, smape: 10, mase, wape: 0.1 },
  candidates: [],
  forecast: [{ period: '2027-01', demand: 9, intervals: [] }],
  intervalMethod: 'none',
  warnings: warnings.map((code) => ({ code, message: code })),
})
const failed = (sku: string): ResultItem => ({ sku, frequency: 'month', failure: { code: 'empty-series', message: 'no demand' } })

/** Commits the items as chunk 0 of a new run created at `at` (publishing unless told otherwise). */
async function commit(runId: string, at: string, items: ResultItem[], publish = true, chunk = 0): Promise<void> {
  if (chunk === 0) await runs.createRun(T, runId, runRequest(syntheticSeries(items.length + 1)), items.length, new Date(at))
  const outcome = await runs.commitChunk(T, runId, chunk, prepareItems(items), tallyItems(items, 'mase'), new Date(at), publish)
  expect(['committed', 'finished', 'duplicate', 'succeeded']).toContain(outcome)
}

/** Every index set's members, as a plain object, to compare whole states. */
async function indexState(): Promise<Record<string, [string, number][]>> {
  const k = summaryKeys(prefix, T)
  const keys = (await redis.keys(`${k.base}:*`)).filter((key) => key !== k.all).sort()
  const out: Record<string, [string, number][]> = {}
  for (const key of keys) {
    const flat = await redis.zrange(key, 0, -1, 'WITHSCORES')
    const pairs: [string, number][] = []
    for (let i = 0; i < flat.length; i += 2) pairs.push([flat[i]!, Number(flat[i + 1])])
    out[key.slice(k.base.length + 1)] = pairs
  }
  return out
}

async function storeHistories(skus: readonly string[], tags: string[] = []): Promise<void> {
  for (let i = 0; i < skus.length; i += 1000) {
    const batch = skus.slice(i, i + 1000).map((sku) => ({
      sku,
      incoming: { frequency: 'month' as const, startOrdinal: parsePeriod('2025-01', 'month'), demand: [4, 5, 6], tags },
      rows: 3,
      origin: {},
    }))
    await histories.apply(T, batch, (current, p) => mergeHistory(current, p.incoming, 'overwrite'), { readValues: false })
  }
}

beforeAll(async () => {
  url = await redisUrlForTests()
  prefix = uniquePrefix('sku-summary-store')
  redis = new Redis(url, { maxRetriesPerRequest: 2 })
  runs = new RunStore(redis, { prefix, resultTtlSeconds: 600, recordTtlSeconds: 1200 })
  histories = new HistoryStore(redis, { prefix })
})
afterAll(async () => {
  redis?.disconnect()
  if (url && prefix) await deleteKeys(url, prefix)
})

describe('SKU summaries written by publishing chunks', () => {
  it('indexes each SKU by model, warning, failure and ranked error; a what-if run writes nothing', async () => {
    await commit('whatif-1', '2026-01-01T00:00:00Z', [ok('GRD-1', 'croston', 0.5)], false)
    expect(await indexState()).toEqual({})
    await commit('pub-1', '2026-01-02T00:00:00Z', [ok('GRD-1', 'croston', 0.5, ['short-history']), ok('GRD-2', 'theta', 1.5), failed('GRD-3')])
    expect(await indexState()).toEqual({
      'e:mase': [['GRD-1', 0.5], ['GRD-2', 1.5]],
      failed: [['GRD-3', 0]],
      'm:croston': [['GRD-1', 0]],
      'm:theta': [['GRD-2', 0]],
      'w:short-history': [['GRD-1', 0]],
    })
    const [one, three] = await runs.summaries.getMany(T, ['GRD-1', 'GRD-3'])
    expect(one).toEqual({
      createdAtMs: Date.parse('2026-01-02T00:00:00Z'),
      runId: 'pub-1',
      summary: { model: 'croston', warnings: ['short-history'], failed: false, error: { measure: 'mase', value: 0.5 } },
    })
    expect(three?.summary).toEqual({ model: null, warnings: [], failed: true, error: null })
  })

  it('a retried chunk changes nothing; a newer run moves SKUs between sets; an older run finishing late does not', async () => {
    const before = await indexState()
    await commit('pub-1', '2026-01-02T00:00:00Z', [ok('GRD-1', 'croston', 0.5, ['short-history']), ok('GRD-2', 'theta', 1.5), failed('GRD-3')], true, 0)
    expect(await indexState()).toEqual(before)

    await commit('pub-2', '2026-01-05T00:00:00Z', [ok('GRD-1', 'theta', 0.9), ok('GRD-3', 'croston', 2, ['no-intervals'])])
    const after = {
      'e:mase': [['GRD-1', 0.9], ['GRD-2', 1.5], ['GRD-3', 2]],
      'm:croston': [['GRD-3', 0]],
      'm:theta': [['GRD-1', 0], ['GRD-2', 0]],
      'w:no-intervals': [['GRD-3', 0]],
    }
    expect(await indexState()).toEqual(after)

    // Created before pub-2, committed after it: pub-2 stays the SKUs' summary.
    await commit('pub-0', '2026-01-03T00:00:00Z', [failed('GRD-1'), ok('GRD-3', 'theta', 0.1)])
    expect(await indexState()).toEqual(after)
    expect((await runs.summaries.getMany(T, ['GRD-1']))[0]?.runId).toBe('pub-2')
  })

  it('forgetting a SKU (its history deleted) removes it from every set', async () => {
    await runs.forgetLatest(T, 'GRD-3')
    expect(await indexState()).toEqual({
      'e:mase': [['GRD-1', 0.9], ['GRD-2', 1.5]],
      'm:theta': [['GRD-1', 0], ['GRD-2', 0]],
    })
    expect(await runs.summaries.getMany(T, ['GRD-3'])).toEqual([null])
    await runs.forgetLatest(T, 'GRD-3')
  })
})

describe('HistoryStore.list with filters', () => {
  // 60 SKUs: models alternate croston / theta, every third failed, every fifth warned, MASE = i / 10.
  const skus = Array.from({ length: 60 }, (_, i) => `WRK-${String(i).padStart(3, '0')}`)
  const itemOf = (sku: string, i: number) => (i % 3 === 2 ? failed(sku) : ok(sku, i % 2 === 0 ? 'croston' : 'theta', i / 10, i % 5 === 0 ? ['short-history'] : []))

  beforeAll(async () => {
    await storeHistories(skus.slice(0, 30), ['site:north'])
    await storeHistories(skus.slice(30), ['site:south'])
    await commit('list-1', '2026-02-01T00:00:00Z', skus.map(itemOf))
    await redis.zadd(exceptionsKey(prefix, T), 0, 'WRK-004', 0, 'WRK-010', 0, 'WRK-031', 0, 'WRK-044')
  })

  const expected = (keep: (i: number) => boolean) => skus.filter((_, i) => keep(i))
  /** Every page of the filter, with `limit` per page. */
  async function all(filter: Parameters<HistoryStore['list']>[1], limit = 4): Promise<string[]> {
    const out: string[] = []
    let cursor: string | undefined
    for (let pages = 0; pages < 100; pages++) {
      const page = await histories.list(T, { ...filter, limit, ...(cursor === undefined ? {} : { cursor }) })
      expect(page.items.length).toBeLessThanOrEqual(limit)
      out.push(...page.items.map((i) => i.sku))
      if (page.nextCursor === null) return out
      cursor = page.nextCursor
    }
    throw new Error('did not end')
  }

  it('each filter alone and combined, paged 4 at a time, gives exactly the matching SKUs in SKU order', async () => {
    const okModel = (i: number, m: number) => i % 3 !== 2 && i % 2 === m
    expect(await all({ limit: 4, model: 'croston' })).toEqual(expected((i) => okModel(i, 0)))
    expect(await all({ limit: 4, failed: true })).toEqual(expected((i) => i % 3 === 2))
    expect(await all({ limit: 4, failed: false })).toEqual(expected((i) => i % 3 !== 2))
    expect(await all({ limit: 4, warning: 'short-history' })).toEqual(expected((i) => i % 3 !== 2 && i % 5 === 0))
    expect(await all({ limit: 4, minError: 1, maxError: 2 })).toEqual(expected((i) => i % 3 !== 2 && i >= 10 && i <= 20))
    expect(await all({ limit: 4, minError: 1, errorMeasure: 'mape' })).toEqual([])
    expect(await all({ limit: 4, exception: true })).toEqual(['WRK-004', 'WRK-010', 'WRK-031', 'WRK-044'])
    expect(await all({ limit: 4, exception: false, model: 'theta', tag: 'site:south' })).toEqual(
      expected((i) => i >= 30 && okModel(i, 1) && i !== 31),
    )
    expect(await all({ limit: 4, model: 'theta', prefix: 'WRK-01', maxError: 1.5 })).toEqual(expected((i) => i >= 10 && i <= 15 && okModel(i, 1)))
    expect(await all({ limit: 4, exception: true, model: 'croston', tag: 'site:north' })).toEqual(['WRK-004', 'WRK-010'])
  })

  it('items carry their published summary', async () => {
    const page = await histories.list(T, { limit: 2, prefix: 'WRK-00' })
    expect(page.items.map((i) => [i.sku, i.published])).toEqual([
      ['WRK-000', { runId: 'list-1', model: 'croston', warnings: ['short-history'], failed: false, error: { measure: 'mase', value: 0 } }],
      ['WRK-001', { runId: 'list-1', model: 'theta', warnings: [], failed: false, error: { measure: 'mase', value: 0.1 } }],
    ])
  })

  it('sort=error lists SKUs with an error, largest first, filtered and paged on its own cursor', async () => {
    const byErrorDesc = (keep: (i: number) => boolean) => expected((i) => i % 3 !== 2 && keep(i)).reverse()
    expect(await all({ limit: 4, sort: 'error' })).toEqual(byErrorDesc(() => true))
    expect(await all({ limit: 3, sort: 'error', minError: 2, maxError: 4 })).toEqual(byErrorDesc((i) => i >= 20 && i <= 40))
    expect(await all({ limit: 2, sort: 'error', model: 'theta', tag: 'site:south', exception: false })).toEqual(
      byErrorDesc((i) => i >= 30 && i % 2 === 1 && i !== 31),
    )
    expect(await all({ limit: 2, sort: 'error', prefix: 'WRK-01' })).toEqual(byErrorDesc((i) => i >= 10 && i < 20))
    expect(await all({ limit: 2, sort: 'error', errorMeasure: 'mape' })).toEqual([])
    // The two orders do not share cursors.
    const bySku = await histories.list(T, { limit: 1 })
    await expect(histories.list(T, { limit: 1, sort: 'error', cursor: bySku.nextCursor! })).rejects.toThrow(CursorError)
    const byError = await histories.list(T, { limit: 1, sort: 'error' })
    await expect(histories.list(T, { limit: 1, cursor: byError.nextCursor! })).rejects.toThrow(CursorError)
  })

  it('sort=error: equal errors in reverse SKU order; a SKU that moves between pages does not stop the walk', async () => {
    await storeHistories(['TIE-A', 'TIE-B', 'TIE-C'])
    await commit('ties-1', '2026-02-01T01:00:00Z', [ok('TIE-A', 'theta', 99), ok('TIE-B', 'theta', 99), ok('TIE-C', 'theta', 99)])
    const first = await histories.list(T, { limit: 1, sort: 'error' })
    expect(first.items.map((i) => i.sku)).toEqual(['TIE-C'])
    const second = await histories.list(T, { limit: 1, sort: 'error', cursor: first.nextCursor! })
    expect(second.items.map((i) => i.sku)).toEqual(['TIE-B'])
    // TIE-B's error drops before the next page: the page still continues with TIE-A.
    await commit('ties-2', '2026-02-01T02:00:00Z', [ok('TIE-B', 'theta', 0.01)])
    const third = await histories.list(T, { limit: 1, sort: 'error', cursor: second.nextCursor! })
    expect(third.items.map((i) => i.sku)).toEqual(['TIE-A'])
  })

  it(`stops after ${MAX_EXAMINED} rows without a match and hands back a cursor to go on from`, async () => {
    const many = Array.from({ length: MAX_EXAMINED + 5 }, (_, i) => `ZZZ-${String(i).padStart(6, '0')}`)
    await storeHistories(many)
    const last = many[many.length - 1]!
    await commit('sparse-1', '2026-02-02T00:00:00Z', [ok(last, 'croston', 3)])
    // Both prefix ranges hold one croston SKU at most; walking every stored SKU with failed=false is bounded.
    const first = await histories.list(T, { limit: 10, prefix: 'ZZZ-', failed: false })
    expect(first.items).toEqual([])
    expect(first.nextCursor).not.toBeNull()
    const second = await histories.list(T, { limit: 10, prefix: 'ZZZ-', failed: false, cursor: first.nextCursor! })
    expect(second.items.map((i) => i.sku)).toEqual([last])
    expect(second.nextCursor).toBeNull()
    // Walking the model set instead (the most selective) finds it at once.
    expect((await histories.list(T, { limit: 10, prefix: 'ZZZ-', model: 'croston' })).items.map((i) => i.sku)).toEqual([last])
    // So does an error range that few SKUs fall in: they are read whole, not walked through every SKU.
    const few = await histories.list(T, { limit: 10, prefix: 'ZZZ-', minError: 2.95, maxError: 3.05 })
    expect([few.items.map((i) => i.sku), few.nextCursor]).toEqual([[last], null])
    const after = await histories.list(T, { limit: 10, prefix: 'ZZZ-', minError: 2.95, cursor: encodeCursor(last) })
    expect([after.items, after.nextCursor]).toEqual([[], null])
  })
})
