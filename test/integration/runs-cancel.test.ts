import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Queue } from 'bullmq'
import { Redis } from 'ioredis'
import { createRunGateway, type RunMachinery } from '../../src/queue/gateway.js'
import { startProcessWorkers, type ProcessWorkers } from '../../src/worker-main.js'
import { CHUNK_QUEUE } from '../../src/queue/names.js'
import { createLogger } from '../../src/logger.js'
import { runKeys } from '../../src/storage/keys.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../helpers/redis.js'
import { runRequest, runsTestConfig, syntheticSeries, waitFor } from '../queue/fixtures.js'

let url: string
let prefix: string
let gateway: RunMachinery
let workers: ProcessWorkers | undefined
let redis: Redis
let queue: Queue

beforeAll(async () => {
  url = await redisUrlForTests()
  prefix = uniquePrefix('runs-cancel')
  gateway = createRunGateway(runsTestConfig(url, prefix), { logger: createLogger({ level: 'silent' }) })
  redis = new Redis(url)
  queue = new Queue(CHUNK_QUEUE, { connection: { url }, prefix })
})

afterAll(async () => {
  await workers?.close()
  await queue?.close()
  await gateway?.close()
  redis?.disconnect()
  if (url && prefix) await deleteKeys(url, prefix)
})

// Chunks carry fair-share priorities, so BullMQ keeps waiting ones as 'prioritized'.
const waitingChunks = () => queue.getJobCountByTypes('waiting', 'prioritized')

describe('cancel', { timeout: 120_000 }, () => {
  it('cancels a queued run: its chunk jobs and inputs are removed', async () => {
    const run = await gateway.submit('acme', runRequest(syntheticSeries(35)))
    expect(await waitingChunks()).toBe(4)
    const cancelled = await gateway.cancel('acme', run.id)
    expect(cancelled?.status).toBe('cancelled')
    expect(cancelled?.finishedAt).not.toBeNull()
    expect(cancelled?.summary).toBeNull()
    expect(await waitingChunks()).toBe(0)
    const k = runKeys(prefix, 'acme', run.id)
    expect(await redis.exists(k.input(0), k.input(1), k.input(2), k.input(3))).toBe(0)
    // Cancelling again returns the run unchanged.
    expect(await gateway.cancel('acme', run.id)).toEqual(cancelled)
  })

  it('stops a running run: no chunk is counted after the cancel', async () => {
    const config = runsTestConfig(url, prefix, { workerConcurrency: 1 })
    // 40 chunks of 10 long series: the single worker thread is still busy when we cancel.
    const run = await gateway.submit('acme', runRequest(syntheticSeries(400, 144), { holdoutOrigins: 4, horizon: 12 }))
    workers = startProcessWorkers(config, createLogger({ level: 'silent' }))
    await waitFor(async () => {
      const r = await gateway.get('acme', run.id)
      return r && r.progress.done > 0 ? r : undefined
    }, 60_000, 'first chunk')
    const cancelled = await gateway.cancel('acme', run.id)
    expect(cancelled?.status).toBe('cancelled')
    // The chunk in flight finds the run cancelled and skips its commit; nothing else is left.
    await waitFor(async () => ((await queue.getActiveCount()) === 0 ? true : undefined), 30_000, 'no active chunk')
    expect(await waitingChunks()).toBe(0)
    const after = await gateway.get('acme', run.id)
    expect(after?.status).toBe('cancelled')
    expect(after?.progress.done).toBe(cancelled?.progress.done)
    expect(after!.progress.done).toBeLessThan(400)
    const k = runKeys(prefix, 'acme', run.id)
    expect(await redis.hlen(k.items)).toBe(after!.progress.done)
  })

  it('returns a finished run unchanged', async () => {
    const run = await gateway.submit('acme', runRequest(syntheticSeries(5)))
    const done = await waitFor(async () => {
      const r = await gateway.get('acme', run.id)
      return r?.status === 'succeeded' ? r : undefined
    }, 60_000, 'run to succeed')
    expect(await gateway.cancel('acme', run.id)).toEqual(done)
  })

  it('reports queue depth', async () => {
    // A run is marked succeeded before its last chunk job leaves the active list; wait for the queue to settle.
    const stats = await waitFor(async () => {
      const s = await gateway.stats()
      return s.active === 0 && s.waiting === 0 ? s : undefined
    }, 30_000, 'queue to settle')
    expect(stats).toMatchObject({ waiting: 0, active: 0, delayed: 0, failed: 0 })
    // Runs by status (storage/runs/stats-store.ts): the two cancelled runs and the finished one above.
    expect(stats.runs).toEqual({ queued: 0, running: 0, succeeded: 1, failed: 0, cancelled: 2 })
    await expect(gateway.ping()).resolves.toBeUndefined()
  })
})
