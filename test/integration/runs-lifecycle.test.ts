import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Redis } from 'ioredis'
import { createRunGateway, type RunMachinery } from '../../src/queue/gateway.js'
import { startProcessWorkers, type ProcessWorkers } from '../../src/worker-main.js'
import { createLogger } from '../../src/logger.js'
import { runKeys, latestKey } from '../../src/storage/keys.js'
import type { FailedItem, ForecastItem, RunRecord } from '../../src/runs/contract.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../helpers/redis.js'
import { runRequest, runsTestConfig, syntheticSeries, waitFor } from '../queue/fixtures.js'

let url: string
let prefix: string
let gateway: RunMachinery
let workers: ProcessWorkers
let redis: Redis

const finished = (tenant: string, id: string) =>
  waitFor(async () => {
    const r = await gateway.get(tenant, id)
    return r && r.status !== 'queued' && r.status !== 'running' ? r : undefined
  }, 60_000, `run ${id} to finish`)

beforeAll(async () => {
  url = await redisUrlForTests()
  prefix = uniquePrefix('runs-lifecycle')
  const config = runsTestConfig(url, prefix)
  gateway = createRunGateway(config, { logger: createLogger({ level: 'silent' }) })
  workers = startProcessWorkers(config, createLogger({ level: 'silent' }))
  redis = new Redis(url)
})

afterAll(async () => {
  await workers?.close()
  await gateway?.close()
  redis?.disconnect()
  if (url && prefix) await deleteKeys(url, prefix)
})

describe('run lifecycle through the gateway and a sandboxed worker', { timeout: 120_000 }, () => {
  let run: RunRecord
  const series = syntheticSeries(45)
  // The engine rejects negative demand (EngineInputError 'negative-value'); it becomes an error item.
  series[7] = { sku: 'SKU-00007', demand: [3, -2, 5, 4, 6, 5, 7, 6, 8, 7, 9, 8] }

  beforeAll(async () => {
    run = await gateway.submit('acme', runRequest(series, { publish: true }))
  })

  it('returns a queued run with its progress total', () => {
    expect(run.status).toBe('queued')
    expect(run.progress).toEqual({ total: 45, done: 0, failed: 0 })
    expect(run.summary).toBeNull()
  })

  it('succeeds with every series done, the rejected one counted as failed', async () => {
    const r = await finished('acme', run.id)
    expect(r.status).toBe('succeeded')
    expect(r.progress).toEqual({ total: 45, done: 45, failed: 1 })
    expect(r.startedAt).not.toBeNull()
    expect(Date.parse(r.finishedAt!)).toBeGreaterThanOrEqual(Date.parse(r.startedAt!))
    const wins = Object.values(r.summary!.modelCounts).reduce((a, b) => a + (b ?? 0), 0)
    expect(wins).toBe(44)
    expect(r.summary!.rankBy).toBe('mase')
    expect(r.summary!.meanHoldoutError).toBeGreaterThan(0)
  })

  it('stores the rejected series as a failed item with the engine code', async () => {
    const page = await gateway.results('acme', run.id, { limit: 10, sku: 'SKU-00007' })
    expect(page!.items).toHaveLength(1)
    const item = page!.items[0] as FailedItem
    expect(item.failure.code).toBe('negative-value')
  })

  it('stores forecasts of the requested horizon without fitted values', async () => {
    const page = await gateway.results('acme', run.id, { limit: 1, sku: 'SKU-00003' })
    const item = page!.items[0] as ForecastItem
    expect(item.forecast).toHaveLength(6)
    expect(item).not.toHaveProperty('fitted')
    expect(item.modelChoice.rankBy).toBe('mase')
  })

  it('pages through every SKU once, in order', async () => {
    const seen: string[] = []
    let cursor: string | undefined
    let pages = 0
    do {
      const page = await gateway.results('acme', run.id, { limit: 7, cursor })
      seen.push(...page!.items.map((i) => i.sku))
      cursor = page!.nextCursor ?? undefined
      pages++
    } while (cursor)
    expect(pages).toBe(7)
    expect(seen).toEqual(series.map((s) => s.sku).sort())
  })

  it('filters by SKU: one item, or none for a SKU not in the run', async () => {
    const hit = await gateway.results('acme', run.id, { limit: 5, sku: 'SKU-00044' })
    expect(hit).toMatchObject({ items: [{ sku: 'SKU-00044' }], nextCursor: null })
    expect(await gateway.results('acme', run.id, { limit: 5, sku: 'NOT-IN-RUN' })).toEqual({ items: [], nextCursor: null })
  })

  it('rejects a cursor it did not issue', async () => {
    await expect(gateway.results('acme', run.id, { limit: 5, cursor: '***' })).rejects.toMatchObject({
      name: 'CursorError',
      field: 'cursor',
    })
  })

  it('keeps tenants apart', async () => {
    expect(await gateway.get('other', run.id)).toBeNull()
    expect(await gateway.results('other', run.id, { limit: 5 })).toBeNull()
    expect(await gateway.cancel('other', run.id)).toBeNull()
    expect(await gateway.latestForecast('other', 'SKU-00003')).toBeNull()
  })

  it('points the latest forecast of each successful SKU at the run', async () => {
    const latest = await gateway.latestForecast('acme', 'SKU-00003')
    expect(latest?.runId).toBe(run.id)
    expect(latest?.item.sku).toBe('SKU-00003')
    expect(await gateway.latestForecast('acme', 'SKU-00007')).toBeNull()
  })

  it('sets retention TTLs: results for the retention period, the record twice as long, latest records none', async () => {
    const k = runKeys(prefix, 'acme', run.id)
    const [items, skus, record, latest] = await Promise.all([
      redis.ttl(k.items),
      redis.ttl(k.skus),
      redis.ttl(k.run),
      redis.ttl(latestKey(prefix, 'acme')),
    ])
    for (const t of [items, skus]) {
      expect(t).toBeGreaterThan(3500)
      expect(t).toBeLessThanOrEqual(3600)
    }
    expect(latest).toBe(-1)
    expect(record).toBeGreaterThan(7100)
    expect(record).toBeLessThanOrEqual(7200)
    // Chunk inputs are gone once their results are written.
    expect(await redis.exists(k.input(0), k.input(4))).toBe(0)
  })
})

describe('a later run owns the latest forecast', { timeout: 120_000 }, () => {
  it('is not overwritten by an earlier run finishing late', async () => {
    const series = syntheticSeries(3, 36, 'LATE')
    const first = await gateway.submit('acme', runRequest(series, { publish: true }))
    const second = await gateway.submit('acme', runRequest(series, { horizon: 3, publish: true }))
    await finished('acme', first.id)
    await finished('acme', second.id)
    const latest = await gateway.latestForecast('acme', 'LATE-00001')
    expect(latest?.runId).toBe(second.id)
  })
})
