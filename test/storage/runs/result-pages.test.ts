import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Redis } from 'ioredis'
import { forecastSeries } from '../../../src/engine/index.js'
import { RunStore } from '../../../src/storage/runs/run-store.js'
import { resultsPageJson } from '../../../src/storage/runs/result-pages.js'
import type { ResultItem } from '../../../src/runs/contract.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../../helpers/redis.js'
import { prepareItems } from '../../../src/storage/items/prepared-item.js'
import { runRequest, syntheticSeries } from '../../queue/fixtures.js'
import { tallyItems } from '../../../src/runs/tally.js'
import { toResultItem } from '../../../src/runs/forecast-sku.js'

let url: string
let prefix: string
let redis: Redis
let store: RunStore
const t0 = new Date('2026-03-01T10:00:00.000Z')

beforeAll(async () => {
  url = await redisUrlForTests()
  prefix = uniquePrefix('result-pages')
  redis = new Redis(url)
  store = new RunStore(redis, { prefix, resultTtlSeconds: 600, recordTtlSeconds: 1200 })
})

afterAll(async () => {
  redis?.disconnect()
  if (url && prefix) await deleteKeys(url, prefix)
})

/** 25 engine results (one an error item) committed as one run of one chunk. */
async function committedRun(runId: string): Promise<ResultItem[]> {
  const series = syntheticSeries(25)
  await store.createRun('acme', runId, runRequest(series), 25, t0)
  const items: ResultItem[] = series.map((s, i) =>
    i === 3 ? { sku: s.sku, frequency: 'month', failure: { code: 'series-too-short', message: 'holt requires "at least" 4 data points' } } : toResultItem(s.sku, 'month', forecastSeries({ demand: s.demand, frequency: 'month', horizon: 6 })),
  )
  expect(await store.commitChunk('acme', runId, 0, prepareItems(items), tallyItems(items, 'mase'), t0)).toBe('finished')
  return items
}

describe('results pages as JSON text', () => {
  it('equal JSON.stringify of the decoded page, byte for byte, for every page, cursor and sku', async () => {
    await committedRun('pages-1')
    let cursor: string | undefined
    let pages = 0
    do {
      const expected = JSON.stringify(await store.resultsPage('acme', 'pages-1', { limit: 7, cursor }))
      const body = await resultsPageJson(redis, prefix, 'acme', 'pages-1', { limit: 7, cursor })
      expect(body?.toString('utf8')).toBe(expected)
      cursor = (JSON.parse(expected) as { nextCursor: string | null }).nextCursor ?? undefined
      pages++
    } while (cursor !== undefined)
    expect(pages).toBe(4)
    for (const sku of ['SKU-00003', 'SKU-00010', 'NOT-THERE']) {
      const expected = JSON.stringify(await store.resultsPage('acme', 'pages-1', { limit: 5, sku }))
      expect((await resultsPageJson(redis, prefix, 'acme', 'pages-1', { limit: 5, sku }))?.toString('utf8')).toBe(expected)
    }
  })

  it('are null for an unknown run or tenant and refuse a malformed cursor', async () => {
    await committedRun('pages-2')
    expect(await resultsPageJson(redis, prefix, 'acme', 'nope', { limit: 5 })).toBeNull()
    expect(await resultsPageJson(redis, prefix, 'other', 'pages-2', { limit: 5 })).toBeNull()
    await expect(resultsPageJson(redis, prefix, 'acme', 'pages-2', { limit: 5, cursor: '***' })).rejects.toMatchObject({ name: 'CursorError', field: 'cursor' })
  })
})
