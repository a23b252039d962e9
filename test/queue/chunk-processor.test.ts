import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Job } from 'bullmq'
import { Redis } from 'ioredis'
import { forecastSeries } from '../../src/engine/index.js'
import { createLogger } from '../../src/logger.js'
import { createChunkProcessor } from '../../src/queue/processor.js'
import { runKeys } from '../../src/storage/keys.js'
import { RunStore } from '../../src/storage/runs/run-store.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../helpers/redis.js'
import { runRequest, syntheticSeries } from './fixtures.js'

/** The chunk processor in this process, with the real engine and a real Redis store. */

let url: string
let prefix: string
let redis: Redis
let store: RunStore
const ended: string[] = []

const job = (runId: string, chunkIndex: number) =>
  ({ id: `${runId}.${chunkIndex}`, data: { tenant: 'acme', runId, chunkIndex } }) as unknown as Job

beforeAll(async () => {
  url = await redisUrlForTests()
  prefix = uniquePrefix('chunk-processor')
  redis = new Redis(url)
  store = new RunStore(redis, { prefix, resultTtlSeconds: 600, recordTtlSeconds: 1200 })
})

afterAll(async () => {
  redis?.disconnect()
  if (url && prefix) await deleteKeys(url, prefix)
})

const processor = () =>
  createChunkProcessor({
    store,
    forecast: forecastSeries,
    logger: createLogger({ level: 'silent' }),
    onRunEnded: async (_tenant, runId) => void ended.push(runId),
  })

describe('chunk processor', () => {
  it('commits a chunk, finishes the run with the last one, and deletes the inputs', async () => {
    const request = runRequest(syntheticSeries(6))
    await store.createRun('acme', 'p-1', request, 3, new Date())
    const process = processor()
    expect(await process(job('p-1', 0))).toEqual({ outcome: 'committed', series: 3, failed: 0 })
    expect(await process(job('p-1', 1))).toEqual({ outcome: 'finished', series: 3, failed: 0 })
    expect((await store.getRun('acme', 'p-1'))?.status).toBe('succeeded')
    expect(ended.filter((id) => id === 'p-1')).toHaveLength(1)
    const k = runKeys(prefix, 'acme', 'p-1')
    expect(await redis.exists(k.input(0), k.input(1))).toBe(0)
    // A second delivery of a finished chunk does nothing.
    expect(await process(job('p-1', 1))).toEqual({ outcome: 'already-done', series: 0, failed: 0 })
  })

  it('completes the steps after the commit when the last chunk is retried after a crash', async () => {
    const request = runRequest(syntheticSeries(2), { publish: true })
    await store.createRun('acme', 'p-2', request, 2, new Date())
    const k = runKeys(prefix, 'acme', 'p-2')
    const input = await redis.get(k.input(0))
    const process = processor()
    await process(job('p-2', 0))
    // As if the worker died after the commit, before its later steps: the input is still there.
    await redis.set(k.input(0), input!)
    await redis.hdel(`${prefix}:t:acme:latest`, 'SKU-00000')
    expect(await process(job('p-2', 0))).toMatchObject({ outcome: 'succeeded' })
    expect((await store.getRun('acme', 'p-2'))?.progress).toEqual({ total: 2, done: 2, failed: 0 })
    expect((await store.latest('acme', 'SKU-00000'))?.runId).toBe('p-2')
    expect(ended.filter((id) => id === 'p-2')).toHaveLength(2)
    expect(await redis.exists(k.input(0))).toBe(0)
  })

  it('skips chunks of a cancelled run and drops their input', async () => {
    await store.createRun('acme', 'p-3', runRequest(syntheticSeries(4)), 2, new Date())
    await store.endRun('acme', 'p-3', 'cancelled', null, new Date())
    expect(await processor()(job('p-3', 1))).toEqual({ outcome: 'skipped', series: 0, failed: 0 })
    expect(await redis.exists(runKeys(prefix, 'acme', 'p-3').input(1))).toBe(0)
    expect((await store.getRun('acme', 'p-3'))?.progress.done).toBe(0)
  })

  it('a publishing chunk records the worklist once: a retried chunk changes nothing, the next run clears what no longer holds', async () => {
    const long = syntheticSeries(1, 36, 'GLOVE')[0]!
    const series = [long, { sku: 'SEED-NEW', demand: [4, 5, 6, 5] }, { sku: 'HOSE-NEG', demand: [3, -2, 4, 5, 6, 4, 5, 3, 4, 5, 6, 4] }]
    await store.createRun('acme', 'p-4', runRequest(series, { publish: true }), 3, new Date(1_000))
    const k = runKeys(prefix, 'acme', 'p-4')
    const input = await redis.get(k.input(0))
    const process = processor()
    expect(await process(job('p-4', 0))).toMatchObject({ outcome: 'finished', failed: 1 })
    const listed = async () => Object.fromEntries((await store.worklist.entries('acme', series.map((s) => s.sku))).map((e) => [e!.sku, [e!.runId, e!.kinds]]))
    const first = { [long.sku]: ['p-4', []], 'SEED-NEW': ['p-4', ['short-history']], 'HOSE-NEG': ['p-4', ['failed']] }
    expect(await listed()).toEqual(first)
    // The same chunk again, as after a crash before its input was deleted.
    await redis.set(k.input(0), input!)
    expect(await process(job('p-4', 0))).toMatchObject({ outcome: 'succeeded' })
    expect(await listed()).toEqual(first)
    expect(await store.worklist.counts('acme')).toEqual({ 'large-change': 0, failed: 1, 'short-history': 1 })
    // A newer run with the negative value corrected: HOSE-NEG leaves the list; the same demand is no large change.
    const fixed = series.map((s) => (s.sku === 'HOSE-NEG' ? { ...s, demand: s.demand.map((v) => Math.abs(v!)) } : s))
    await store.createRun('acme', 'p-5', runRequest(fixed, { publish: true }), 3, new Date(2_000))
    expect(await process(job('p-5', 0))).toMatchObject({ outcome: 'finished', failed: 0 })
    expect(await listed()).toEqual({ [long.sku]: ['p-5', []], 'SEED-NEW': ['p-5', ['short-history']], 'HOSE-NEG': ['p-5', []] })
  })

  it('refuses job data of the wrong shape without retrying', async () => {
    const bad = { id: 'x', data: { tenant: 'acme' } } as unknown as Job
    await expect(processor()(bad)).rejects.toMatchObject({ name: 'UnrecoverableError' })
  })
})
