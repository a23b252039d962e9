import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Redis } from 'ioredis'
import { RunStore } from '../../src/storage/run-store.js'
import { tallyItems } from '../../src/storage/codec.js'
import { runKeys } from '../../src/storage/keys.js'
import { RunInputError, type ResultItem } from '../../src/storage/types.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../helpers/redis.js'
import { runRequest, syntheticSeries } from '../queue/fixtures.js'

let url: string
let prefix: string
let redis: Redis
let store: RunStore
const t0 = new Date('2026-03-01T10:00:00.000Z')

const errorItems = (skus: string[]): ResultItem[] => skus.map((sku) => ({ sku, error: { code: 'empty-series', message: 'x' } }))

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

  it('refuses a request where two series share a SKU', async () => {
    const series = [...syntheticSeries(3), { sku: 'SKU-00001', values: [1] }]
    const err = await store.createRun('acme', 'dup-1', runRequest(series), 2, t0).catch((e: unknown) => e)
    expect(err).toBeInstanceOf(RunInputError)
    expect(err).toMatchObject({ code: 'duplicate-sku', field: 'series[3].sku' })
    expect(await store.getRun('acme', 'dup-1')).toBeNull()
  })

  it('counts a chunk committed twice only once, and finishes on the last chunk', async () => {
    await store.createRun('acme', 'idem-1', runRequest(syntheticSeries(4)), 2, t0)
    const first = errorItems(['SKU-00000', 'SKU-00001'])
    expect(await store.commitChunk('acme', 'idem-1', 0, first, tallyItems(first, 'mase'), t0)).toBe('committed')
    expect(await store.commitChunk('acme', 'idem-1', 0, first, tallyItems(first, 'mase'), t0)).toBe('duplicate')
    expect((await store.getRun('acme', 'idem-1'))?.progress).toEqual({ total: 4, done: 2, failed: 2 })
    const second = errorItems(['SKU-00002', 'SKU-00003'])
    expect(await store.commitChunk('acme', 'idem-1', 1, second, tallyItems(second, 'mase'), t0)).toBe('finished')
    const run = await store.getRun('acme', 'idem-1')
    expect(run).toMatchObject({ status: 'succeeded', finishedAt: t0.toISOString(), progress: { total: 4, done: 4, failed: 4 } })
    expect(run?.summary).toEqual({ metric: 'mase', modelWins: {}, meanHoldoutError: null })
  })

  it('writes nothing for a chunk of a cancelled run', async () => {
    await store.createRun('acme', 'cancel-1', runRequest(syntheticSeries(4)), 2, t0)
    expect((await store.endRun('acme', 'cancel-1', 'cancelled', null, t0))?.status).toBe('cancelled')
    const items = errorItems(['SKU-00000', 'SKU-00001'])
    expect(await store.commitChunk('acme', 'cancel-1', 0, items, tallyItems(items, 'mase'), t0)).toBe('cancelled')
    expect(await redis.exists(runKeys(prefix, 'acme', 'cancel-1').items)).toBe(0)
    expect((await store.getRun('acme', 'cancel-1'))?.progress.done).toBe(0)
    // Ending a run that already ended changes nothing.
    expect((await store.endRun('acme', 'cancel-1', 'failed', 'late', t0))?.status).toBe('cancelled')
  })

  it('moves a queued run to running when its first chunk starts', async () => {
    await store.createRun('acme', 'start-1', runRequest(syntheticSeries(2)), 2, t0)
    const started = await store.startChunk('acme', 'start-1', new Date(t0.getTime() + 1000))
    expect(started).toMatchObject({ status: 'running', createdAtMs: t0.getTime() })
    expect(started?.settings.horizon).toBe(6)
    expect((await store.getRun('acme', 'start-1'))?.startedAt).toBe('2026-03-01T10:00:01.000Z')
    expect(await store.startChunk('acme', 'no-such-run', t0)).toBeNull()
  })

  it('keeps the latest forecast pointer on the run created last', async () => {
    const older = t0.getTime()
    const newer = older + 5000
    expect(await store.updateLatest('acme', 'run-new', newer, t0, ['A', 'B'])).toBe(2)
    // The older run finishes late: it must not take the SKUs over.
    expect(await store.updateLatest('acme', 'run-old', older, t0, ['A', 'B', 'C'])).toBe(1)
    const pointers = await redis.hgetall(`${prefix}:t:acme:latest`)
    expect(pointers.A).toMatch(/\|run-new\|/)
    expect(pointers.C).toMatch(/\|run-old\|/)
    // Re-applying the same run is harmless (idempotent retry).
    expect(await store.updateLatest('acme', 'run-new', newer, t0, ['A'])).toBe(1)
  })

  it('answers null for unknown runs and malformed ids', async () => {
    expect(await store.getRun('acme', 'nope')).toBeNull()
    expect(await store.getRun('acme', 'a}b')).toBeNull()
    expect(await store.getRun('bad:tenant', 'x')).toBeNull()
    expect(await store.resultsPage('acme', 'nope', { limit: 5 })).toBeNull()
    expect(await store.latest('acme', 'unknown-sku')).toBeNull()
  })
})
