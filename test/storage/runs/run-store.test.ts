import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Redis } from 'ioredis'
import { RunStore } from '../../../src/storage/runs/run-store.js'
import type { RunScripts } from '../../../src/storage/runs/scripts.js'
import { latestKey, runKeys } from '../../../src/storage/keys.js'
import { storeItem } from '../../../src/storage/items/item-codec.js'
import { type ResultItem } from '../../../src/runs/contract.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../../helpers/redis.js'
import { prepareItems } from '../../../src/storage/items/prepared-item.js'
import { runRequest, syntheticSeries } from '../../queue/fixtures.js'
import { tallyItems } from '../../../src/runs/tally.js'

let url: string
let prefix: string
let redis: Redis
let store: RunStore
const t0 = new Date('2026-03-01T10:00:00.000Z')

const errorItems = (skus: string[]): ResultItem[] => skus.map((sku) => ({ sku, frequency: 'month', failure: { code: 'empty-series', message: 'x' } }))

/** A successful item forecasting `demand` for the months from 2027-01. */
const okItem = (sku: string, demand: number[] = [7]): ResultItem => ({
  sku, frequency: 'month', model: 'last-value', family: 'level', params: {}, holdoutErrors: null, candidates: [], warnings: [],
  modelChoice: { method: 'none', rankBy: 'mase', holdoutPeriods: 0, holdoutOrigins: 1 },
  forecast: demand.map((d, i) => ({ period: `2027-0${i + 1}`, demand: d, intervals: [] })),
  intervalMethod: 'none',
})
const okItems = (skus: string[], values?: number[]) => skus.map((sku) => okItem(sku, values))
const pointsOf = (p: { runId: string; points: ReadonlyMap<string, number> } | null) => p && [p.runId, [...p.points]]

beforeAll(async () => {
  url = await redisUrlForTests()
  prefix = uniquePrefix('run-store')
  redis = new Redis(url)
  store = new RunStore(redis, { prefix, resultTtlSeconds: 600, recordTtlSeconds: 1200 })
})

afterAll(async () => {
  redis?.disconnect()
  if (url && prefix) await deleteKeys(url, prefix)
})

describe('RunStore', () => {
  it('splits the series into chunk inputs of chunkSize', async () => {
    const { record, chunks } = await store.createRun('acme', 'split-1', runRequest(syntheticSeries(7)), 3, t0)
    expect(chunks).toBe(3)
    expect(record).toMatchObject({ id: 'split-1', tenant: 'acme', status: 'queued', createdAt: t0.toISOString() })
    expect((await store.readChunkInput('acme', 'split-1', 2))?.map((s) => s.sku)).toEqual(['SKU-00006'])
    expect(await store.chunkCount('acme', 'split-1')).toBe(3)
    const ttl = await redis.ttl(runKeys(prefix, 'acme', 'split-1').input(0))
    expect(ttl).toBeGreaterThan(590)
  })

  it('writes prepared inputs of several MiB (strings or UTF-8 bytes) over several round trips, each read back as sent', async () => {
    // Invented series, about 700 KiB per input: 6 inputs need three 2 MiB write batches.
    const inputs = Array.from({ length: 6 }, (_, c) =>
      Array.from({ length: 5000 }, (_, i) => ({ sku: `MULCH-${c}-${i}`, demand: Array.from({ length: 12 }, (_, t) => (i * 7 + t * 13) % 97) })),
    )
    const encoded = inputs.map((input, c) => (c % 2 === 0 ? JSON.stringify(input) : new TextEncoder().encode(JSON.stringify(input))))
    const { series: _one, ...settings } = runRequest(syntheticSeries(1))
    const { chunks } = await store.createRunFromInputs('acme', 'prepared-1', settings, 30_000, encoded, t0)
    expect(chunks).toBe(6)
    for (let c = 0; c < 6; c++) expect(await store.readChunkInput('acme', 'prepared-1', c)).toEqual(inputs[c])
    expect(await store.getRun('acme', 'prepared-1')).toMatchObject({ status: 'queued', progress: { total: 30_000 } })
  })

  it('counts a chunk committed twice only once, and finishes on the last chunk', async () => {
    await store.createRun('acme', 'idem-1', runRequest(syntheticSeries(4)), 2, t0)
    const first = errorItems(['SKU-00000', 'SKU-00001'])
    expect(await store.commitChunk('acme', 'idem-1', 0, prepareItems(first), tallyItems(first, 'mase'), t0)).toBe('committed')
    expect(await store.commitChunk('acme', 'idem-1', 0, prepareItems(first), tallyItems(first, 'mase'), t0)).toBe('duplicate')
    expect((await store.getRun('acme', 'idem-1'))?.progress).toEqual({ total: 4, done: 2, failed: 2 })
    const second = errorItems(['SKU-00002', 'SKU-00003'])
    expect(await store.commitChunk('acme', 'idem-1', 1, prepareItems(second), tallyItems(second, 'mase'), t0)).toBe('finished')
    const run = await store.getRun('acme', 'idem-1')
    expect(run).toMatchObject({ status: 'succeeded', finishedAt: t0.toISOString(), progress: { total: 4, done: 4, failed: 4 } })
    expect(run?.summary).toEqual({ rankBy: 'mase', modelCounts: {}, meanHoldoutError: null })
  })

  it('has every SKU\'s result and latest forecast readable once the run reads succeeded', async () => {
    // A client polling the run and then each SKU's latest forecast must never get a 404 in between.
    await store.createRun('acme', 'order-1', runRequest(syntheticSeries(4)), 2, t0)
    const first = okItems(['SKU-00000', 'SKU-00001'])
    expect(await store.commitChunk('acme', 'order-1', 0, prepareItems(first), tallyItems(first, 'mase'), t0, true)).toBe('committed')
    const second = okItems(['SKU-00002', 'SKU-00003'], [5])
    expect(await store.commitChunk('acme', 'order-1', 1, prepareItems(second), tallyItems(second, 'mase'), t0, true)).toBe('finished')
    expect((await store.getRun('acme', 'order-1'))?.status).toBe('succeeded')
    for (const sku of ['SKU-00000', 'SKU-00001', 'SKU-00002', 'SKU-00003']) {
      const latest = await store.latest('acme', sku)
      expect(latest?.runId).toBe('order-1')
      expect('failure' in latest!.item).toBe(false)
    }
    // A retry of the last chunk after the run finished rewrites nothing it counts and answers 'succeeded'.
    expect(await store.commitChunk('acme', 'order-1', 1, prepareItems(second), tallyItems(second, 'mase'), t0, true)).toBe('succeeded')
    expect((await store.getRun('acme', 'order-1'))?.progress).toEqual({ total: 4, done: 4, failed: 0 })
  })

  it('leaves the latest and published forecasts alone for a what-if run', async () => {
    await store.createRun('whatif', 'pub-1', runRequest(syntheticSeries(1)), 1, t0)
    const published = okItems(['SKU-00000'], [4])
    expect(await store.commitChunk('whatif', 'pub-1', 0, prepareItems(published), tallyItems(published, 'mase'), t0, true)).toBe('finished')
    await store.createRun('whatif', 'what-1', runRequest(syntheticSeries(1)), 1, new Date(t0.getTime() + 1000))
    const whatIf = okItems(['SKU-00000'], [1])
    expect(await store.commitChunk('whatif', 'what-1', 0, prepareItems(whatIf), tallyItems(whatIf, 'mase'), t0)).toBe('finished')
    // The what-if result is readable under its run; the SKU's forecast is still the published one.
    expect((await store.resultsPage('whatif', 'what-1', { limit: 10 }))?.items).toHaveLength(1)
    expect((await store.latest('whatif', 'SKU-00000'))?.runId).toBe('pub-1')
    expect((await store.publishedPoints('whatif', ['SKU-00000']))[0]!.map((p) => p.runId)).toEqual(['pub-1'])
  })

  it('keeps the newest N published forecasts per SKU, newest first, each run once', async () => {
    const kept = new RunStore(redis, { prefix, resultTtlSeconds: 600, recordTtlSeconds: 1200, publishedKept: 3 })
    const at = (i: number) => t0.getTime() + i * 1000
    for (const i of [1, 2, 4, 3]) await kept.updateLatest('kept', `run-${i}`, at(i), t0, prepareItems(okItems(['A'], [i])))
    // A retried chunk of run-4 adds nothing; run-0 is older than every kept one and falls off at once.
    await kept.updateLatest('kept', 'run-4', at(4), t0, prepareItems(okItems(['A'], [4])))
    await kept.updateLatest('kept', 'run-0', at(0), t0, prepareItems(okItems(['A'], [0])))
    const [list] = await kept.publishedPoints('kept', ['A', 'B'])
    expect(list!.map((p) => [p.runId, p.createdAtMs, [...p.points.values()]])).toEqual([
      ['run-4', at(4), [4]],
      ['run-3', at(3), [3]],
      ['run-2', at(2), [2]],
    ])
    expect((await kept.publishedPoints('kept', ['B']))[0]).toEqual([])
  })

  it('counts a chunk whose items were stored by an attempt that died before counting', async () => {
    // The first attempt stored the items (and latest records) and crashed; the retry counts the chunk once.
    await store.createRun('acme', 'crash-1', runRequest(syntheticSeries(2)), 2, t0)
    const k = runKeys(prefix, 'acme', 'crash-1')
    const items = okItems(['SKU-00000', 'SKU-00001'])
    await redis.hset(k.items, 'SKU-00000', storeItem(items[0]!))
    await redis.zadd(k.skus, 0, 'SKU-00000')
    expect(await store.commitChunk('acme', 'crash-1', 0, prepareItems(items), tallyItems(items, 'mase'), t0)).toBe('finished')
    expect((await store.getRun('acme', 'crash-1'))?.progress).toEqual({ total: 2, done: 2, failed: 0 })
    expect(await redis.zcard(k.skus)).toBe(2)
  })

  it('writes nothing for a chunk of a cancelled run', async () => {
    await store.createRun('acme', 'cancel-1', runRequest(syntheticSeries(4)), 2, t0)
    expect((await store.endRun('acme', 'cancel-1', 'cancelled', null, t0))?.status).toBe('cancelled')
    const items = errorItems(['SKU-00000', 'SKU-00001'])
    expect(await store.commitChunk('acme', 'cancel-1', 0, prepareItems(items), tallyItems(items, 'mase'), t0)).toBe('cancelled')
    expect(await redis.exists(runKeys(prefix, 'acme', 'cancel-1').items)).toBe(0)
    expect((await store.getRun('acme', 'cancel-1'))?.progress.done).toBe(0)
    // Ending a run that already ended changes nothing.
    expect((await store.endRun('acme', 'cancel-1', 'failed', { code: 'chunk-failed', message: 'late' }, t0))?.status).toBe('cancelled')
  })

  it('removes the items of a chunk whose run was cancelled between storing and counting them', async () => {
    // The race the cancel integration test can hit: the cancel lands after storeItems, before the count.
    const racing = new RunStore(redis, { prefix, resultTtlSeconds: 600, recordTtlSeconds: 1200 })
    const scripts = (racing as unknown as { scripts: RunScripts }).scripts
    const storeItems = scripts.storeItems.bind(scripts)
    scripts.storeItems = async (keys, args) => {
      const reply = await storeItems(keys, args)
      await racing.endRun('acme', 'race-1', 'cancelled', null, t0)
      return reply
    }
    await store.createRun('acme', 'race-1', runRequest(syntheticSeries(4)), 2, t0)
    const counted = okItems(['SKU-00000', 'SKU-00001'])
    expect(await store.commitChunk('acme', 'race-1', 0, prepareItems(counted), tallyItems(counted, 'mase'), t0)).toBe('committed')
    const late = okItems(['SKU-00002', 'SKU-00003'])
    expect(await racing.commitChunk('acme', 'race-1', 1, prepareItems(late), tallyItems(late, 'mase'), t0)).toBe('cancelled')
    const k = runKeys(prefix, 'acme', 'race-1')
    expect((await store.getRun('acme', 'race-1'))?.progress.done).toBe(2)
    expect((await redis.hkeys(k.items)).sort()).toEqual(['SKU-00000', 'SKU-00001'])
    expect(await redis.zrange(k.skus, 0, -1)).toEqual(['SKU-00000', 'SKU-00001'])
  })

  it('keeps the items of a publishing run caught by the same race: they may already be the SKUs\' latest forecasts', async () => {
    const racing = new RunStore(redis, { prefix, resultTtlSeconds: 600, recordTtlSeconds: 1200 })
    const scripts = (racing as unknown as { scripts: RunScripts }).scripts
    const storeItems = scripts.storeItems.bind(scripts)
    scripts.storeItems = async (keys, args) => {
      const reply = await storeItems(keys, args)
      await racing.endRun('race', 'race-2', 'cancelled', null, t0)
      return reply
    }
    await store.createRun('race', 'race-2', runRequest(syntheticSeries(2)), 2, t0)
    const late = okItems(['SKU-00000', 'SKU-00001'], [5])
    expect(await racing.commitChunk('race', 'race-2', 0, prepareItems(late), tallyItems(late, 'mase'), t0, true)).toBe('cancelled')
    expect((await store.getRun('race', 'race-2'))?.progress.done).toBe(0)
    expect((await store.latest('race', 'SKU-00000'))?.runId).toBe('race-2')
  })

  it('moves a queued run to running when its first chunk starts', async () => {
    await store.createRun('acme', 'start-1', runRequest(syntheticSeries(2)), 2, t0)
    const started = await store.startChunk('acme', 'start-1', new Date(t0.getTime() + 1000))
    expect(started).toMatchObject({ status: 'running', createdAtMs: t0.getTime() })
    expect(started?.settings.horizon).toBe(6)
    expect((await store.getRun('acme', 'start-1'))?.startedAt).toBe('2026-03-01T10:00:01.000Z')
    expect(await store.startChunk('acme', 'no-such-run', t0)).toBeNull()
  })

  it('keeps the latest forecast record on the run created last', async () => {
    const older = t0.getTime()
    const newer = older + 5000
    expect(await store.updateLatest('acme', 'run-new', newer, t0, prepareItems(okItems(['A', 'B'], [7])))).toBe(2)
    // The older run finishes late: it must not take the SKUs over.
    expect(await store.updateLatest('acme', 'run-old', older, t0, prepareItems(okItems(['A', 'B', 'C'], [3])))).toBe(1)
    const records = await redis.hgetall(`${prefix}:t:acme:latest`)
    expect(records.A).toMatch(/\|run-new\|/)
    expect(records.C).toMatch(/\|run-old\|/)
    // Re-applying the same run is harmless (idempotent retry); a tie in creation time goes to the larger run id.
    expect(await store.updateLatest('acme', 'run-new', newer, t0, prepareItems(okItems(['A'])))).toBe(1)
    expect(await store.updateLatest('acme', 'run-a', newer, t0, prepareItems(okItems(['A'])))).toBe(0)
    expect(await store.updateLatest('acme', 'run-z', newer, t0, prepareItems(okItems(['A'], [9])))).toBe(1)
    // Error items never become a SKU's latest forecast.
    expect(await store.updateLatest('acme', 'run-err', newer + 1, t0, prepareItems(errorItems(['A'])))).toBe(0)
    expect((await store.latestPoints('acme', ['A', 'B', 'C', 'D'])).map(pointsOf)).toEqual([
      ['run-z', [['2027-01', 9]]],
      ['run-new', [['2027-01', 7]]],
      ['run-old', [['2027-01', 3]]],
      null,
    ])
  })

  it('keeps the records without expiry: points outlive the results, the forecast itself does not', async () => {
    const key = latestKey(prefix, 'keep')
    await store.createRun('keep', 'keep-1', runRequest(syntheticSeries(1)), 1, t0)
    const items = okItems(['SKU-00000'], [1.23456789, 2])
    await store.commitChunk('keep', 'keep-1', 0, prepareItems(items), tallyItems(items, 'mase'), t0)
    expect(await store.updateLatest('keep', 'keep-1', t0.getTime(), t0, prepareItems(items))).toBe(1)
    expect(await redis.ttl(key)).toBe(-1)
    expect((await store.latest('keep', 'SKU-00000'))?.producedAt).toBe(t0.toISOString())
    // The run's results expire with retention: the forecast is gone (404), scoring still has the points.
    await redis.unlink(runKeys(prefix, 'keep', 'keep-1').items)
    expect(await store.latest('keep', 'SKU-00000')).toBeNull()
    expect((await store.latestPoints('keep', ['SKU-00000'])).map(pointsOf)).toEqual([
      ['keep-1', [['2027-01', 1.234568], ['2027-02', 2]]],
    ])
  })

  it('reads a malformed record as no forecast', async () => {
    const key = latestKey(prefix, 'bad')
    await redis.hset(key, 'A', `${t0.getTime()}|run-1|${t0.toISOString()}`, 'B', 'not a record', 'C', `${t0.getTime()}|run-1|${t0.toISOString()}|m:2027-01:x,`)
    expect(await store.latest('bad', 'A')).toBeNull()
    expect((await store.latestPoints('bad', ['A', 'B', 'C'])).map(pointsOf)).toEqual([null, null, ['run-1', []]])
  })

  it('answers null for unknown runs and malformed ids', async () => {
    expect(await store.getRun('acme', 'nope')).toBeNull()
    expect(await store.getRun('acme', 'a}b')).toBeNull()
    expect(await store.getRun('bad:tenant', 'x')).toBeNull()
    expect(await store.resultsPage('acme', 'nope', { limit: 5 })).toBeNull()
    expect(await store.latest('acme', 'unknown-sku')).toBeNull()
  })
})
