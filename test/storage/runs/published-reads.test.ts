import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Redis } from 'ioredis'
import { RunStore } from '../../../src/storage/runs/run-store.js'
import { PublishedReads } from '../../../src/storage/runs/published-reads.js'
import { runKeys } from '../../../src/storage/keys.js'
import { prepareItems } from '../../../src/storage/items/prepared-item.js'
import { tallyItems } from '../../../src/runs/tally.js'
import type { ResultItem } from '../../../src/runs/contract.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../../helpers/redis.js'
import { runRequest, syntheticSeries } from '../../queue/fixtures.js'

let url: string
let prefix: string
let redis: Redis
let store: RunStore
let reads: PublishedReads
const t0 = new Date('2026-03-01T02:00:00.000Z')

const okItem = (sku: string, demand: number): ResultItem => ({
  sku, frequency: 'month', model: 'last-value', family: 'level', params: {}, holdoutErrors: null, candidates: [], warnings: [],
  modelChoice: { method: 'none', rankBy: 'mase', holdoutPeriods: 0, holdoutOrigins: 1 },
  forecast: [{ period: '2026-04', demand, intervals: [] }],
  intervalMethod: 'none',
})

beforeAll(async () => {
  url = await redisUrlForTests()
  prefix = uniquePrefix('published-reads')
  redis = new Redis(url)
  store = new RunStore(redis, { prefix, resultTtlSeconds: 600, recordTtlSeconds: 1200 })
  reads = new PublishedReads(redis, prefix)
  // Two publishing runs: the later one holds SKU-00001 and SKU-00002.
  for (const [runId, skus, at] of [['pub-1', ['SKU-00000', 'SKU-00001'], t0], ['pub-2', ['SKU-00001', 'SKU-00002'], new Date(t0.getTime() + 1000)]] as const) {
    await store.createRun('garden', runId, runRequest(syntheticSeries(3)), 10, at, { kind: 'scope' })
    const items = skus.map((sku, i) => okItem(sku, 10 * (i + 1)))
    await store.commitChunk('garden', runId, 0, prepareItems(items), tallyItems(items, 'mase'), at, true)
  }
})

afterAll(async () => {
  redis?.disconnect()
  if (url && prefix) await deleteKeys(url, prefix)
})

describe('PublishedReads', () => {
  it('scans every SKU with a latest record, with the run that holds it', async () => {
    const seen = new Map<string, string>()
    let cursor = '0'
    do {
      const step = await reads.scanLatest('garden', cursor, 1)
      for (const [sku, record] of step.records) seen.set(sku, record.runId)
      cursor = step.cursor
    } while (cursor !== '0')
    expect([...seen].sort()).toEqual([['SKU-00000', 'pub-1'], ['SKU-00001', 'pub-2'], ['SKU-00002', 'pub-2']])
    expect(await reads.scanLatest('heating', '0', 10)).toEqual({ records: [], cursor: '0' })
  })

  it('reads the items the records point at, one run at a time; null where none or expired', async () => {
    const records = await reads.latestRecords('garden', ['SKU-00002', 'NOPE', 'SKU-00000'])
    expect(records.map((r) => r?.runId ?? null)).toEqual(['pub-2', null, 'pub-1'])
    const found = [['SKU-00002', records[0]!], ['SKU-00000', records[2]!]] as const
    const forecasts = await reads.latestOf('garden', found)
    expect(forecasts.map((f) => f && [f.runId, f.item.sku, 'forecast' in f.item ? f.item.forecast[0]!.demand : null])).toEqual([
      ['pub-2', 'SKU-00002', 20],
      ['pub-1', 'SKU-00000', 10],
    ])
    expect(forecasts[0]!.producedAt).toBe('2026-03-01T02:00:01.000Z')
    // The results of pub-1 have expired: its SKU has no current forecast to export.
    await redis.del(runKeys(prefix, 'garden', 'pub-1').items)
    expect((await reads.latestOf('garden', found)).map((f) => f?.runId ?? null)).toEqual(['pub-2', null])
  })
})
