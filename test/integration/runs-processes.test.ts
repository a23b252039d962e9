import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Queue } from 'bullmq'
import { Redis } from 'ioredis'
import { createRunGateway, type RunMachinery } from '../../src/queue/gateway.js'
import { CHUNK_QUEUE } from '../../src/queue/names.js'
import { runKeys } from '../../src/storage/keys.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../helpers/redis.js'
import { runRequest, runsTestConfig, syntheticSeries, waitFor } from '../queue/fixtures.js'
import { startWorkerProcess, stopWorkerProcess, type WorkerProcess } from '../queue/worker-process.js'
import { createLogger } from '../../src/logger.js'

/**
 * Worker processes (`src/worker-main.ts`) sharing runs through Redis. Short
 * lock and stalled-check intervals make recovery from a killed worker take
 * seconds instead of the production default of about a minute.
 */

let url: string
let prefix: string
let gateway: RunMachinery
let redis: Redis
let queue: Queue
const processes: WorkerProcess[] = []

const workerEnv = () => ({
  REDIS_URL: url,
  REDIS_PREFIX: prefix,
  CHUNK_SIZE: '25',
  WORKER_CONCURRENCY: '1',
  WORKER_LOCK_DURATION_MS: '2000',
  WORKER_STALLED_INTERVAL_MS: '1000',
})

const spawnWorker = () => {
  const w = startWorkerProcess(workerEnv())
  processes.push(w)
  return w
}

const finished = (id: string, timeoutMs = 120_000) =>
  waitFor(async () => {
    const r = await gateway.get('acme', id)
    return r && r.status !== 'queued' && r.status !== 'running' ? r : undefined
  }, timeoutMs, `run ${id} to finish`)

/** Every SKU of the request has exactly one stored item. */
async function expectEachSkuOnce(runId: string, skus: string[]) {
  const k = runKeys(prefix, 'acme', runId)
  expect(await redis.zcard(k.skus)).toBe(skus.length)
  expect(await redis.hlen(k.items)).toBe(skus.length)
  expect(await redis.zrangebylex(k.skus, '-', '+')).toEqual([...skus].sort())
}

/**
 * Waits until `w` holds an active chunk it has not committed yet (a chunk it
 * just committed may still show as active until BullMQ records completion).
 */
const chunkInFlight = (w: WorkerProcess, runId: string) =>
  waitFor(async () => {
    const active = (await queue.getActive()).map((j) => Number(String(j.id).split('.').pop()))
    return active.find((c) => !w.chunksOf(runId).includes(c))
  }, 30_000, 'a chunk in flight')

beforeAll(async () => {
  url = await redisUrlForTests()
  prefix = uniquePrefix('runs-processes')
  gateway = createRunGateway(runsTestConfig(url, prefix, { chunkSize: 25 }), { logger: createLogger({ level: 'silent' }) })
  redis = new Redis(url)
  queue = new Queue(CHUNK_QUEUE, { connection: { url }, prefix })
})

afterAll(async () => {
  await Promise.all(processes.map((p) => stopWorkerProcess(p)))
  await queue?.close()
  await gateway?.close()
  redis?.disconnect()
  if (url && prefix) await deleteKeys(url, prefix)
})

describe('worker processes', { timeout: 120_000 }, () => {
  it('share one run: both commit chunks, every series exactly once', async () => {
    const a = spawnWorker()
    const b = spawnWorker()
    await Promise.all([a.waitForLog('chunk worker started'), b.waitForLog('chunk worker started')])
    const series = syntheticSeries(400, 60, 'SHARE')
    const run = await gateway.submit('acme', runRequest(series))
    const r = await finished(run.id)
    expect(r.status).toBe('succeeded')
    expect(r.progress).toEqual({ total: 400, done: 400, failed: 0 })
    await expectEachSkuOnce(run.id, series.map((s) => s.sku))
    // Stopped first, so every log line (the last commit's too) has been read.
    expect(await stopWorkerProcess(a)).toBe(0)
    expect(await stopWorkerProcess(b)).toBe(0)
    const ca = a.chunksOf(run.id)
    const cb = b.chunksOf(run.id)
    expect(ca.length).toBeGreaterThan(0)
    expect(cb.length).toBeGreaterThan(0)
    expect([...ca, ...cb].sort((x, y) => x - y)).toEqual(Array.from({ length: 16 }, (_, i) => i))
  })

  it('recover the chunk of a worker killed with SIGKILL mid-run', async () => {
    const victim = spawnWorker()
    await victim.waitForLog('chunk worker started')
    // Long series and several origins make each 25-series chunk take a noticeable time.
    const series = syntheticSeries(250, 144, 'KILL')
    const run = await gateway.submit('acme', runRequest(series, { holdoutOrigins: 4, horizon: 12 }))
    await victim.waitForLog('chunk processed', 60_000)
    // The victim is now working on its next chunk: kill it without any chance to clean up.
    await chunkInFlight(victim, run.id)
    victim.child.kill('SIGKILL')
    expect(await victim.exited).toBe('SIGKILL')
    // BullMQ hands a worker its next chunk in the same step that completes one, so the dead
    // worker (concurrency 1) holds exactly one chunk.
    const orphaned = (await queue.getActive()).map((j) => String(j.id))
    expect(orphaned).toHaveLength(1)
    const orphanIndex = Number(orphaned[0]!.split('.').pop())

    const rescuer = spawnWorker()
    let rescuerExit: number | string
    try {
      const r = await finished(run.id)
      expect(r.status).toBe('succeeded')
      expect(r.progress).toEqual({ total: 250, done: 250, failed: 0 })
      await expectEachSkuOnce(run.id, series.map((s) => s.sku))
    } finally {
      // Stopped before reading its logs, so every line has been read.
      rescuerExit = await stopWorkerProcess(rescuer)
    }
    expect(rescuerExit).toBe(0)
    // The orphaned chunk was moved back by the stalled check and finished by the rescuer
    // (committed by it, or found already committed if the victim died right after its commit).
    expect(rescuer.processedOf(run.id)).toContain(orphanIndex)
    const handled = new Set([...victim.chunksOf(run.id), ...rescuer.processedOf(run.id)])
    expect([...handled].sort((x, y) => x - y)).toEqual(Array.from({ length: 10 }, (_, i) => i))
  })

  it('finish the chunk in flight on SIGTERM, then exit 0', async () => {
    const w = spawnWorker()
    await w.waitForLog('chunk worker started')
    const series = syntheticSeries(250, 144, 'TERM')
    const run = await gateway.submit('acme', runRequest(series, { holdoutOrigins: 4, horizon: 12 }))
    await w.waitForLog('chunk processed', 60_000)
    const inFlight = await chunkInFlight(w, run.id)
    w.child.kill('SIGTERM')
    expect(await w.exited).toBe(0)
    // Nothing was abandoned: no chunk is left active, and every chunk it started was committed.
    expect(await queue.getActiveCount()).toBe(0)
    const committed = w.chunksOf(run.id)
    expect(committed).toContain(inFlight)
    const r = await gateway.get('acme', run.id)
    expect(r?.progress.done).toBe(committed.length * 25)
    expect(w.logs.some((l) => l.msg === 'chunk worker stopped')).toBe(true)

    // The rest waits for the next worker.
    const next = spawnWorker()
    expect((await finished(run.id)).progress).toEqual({ total: 250, done: 250, failed: 0 })
    await expectEachSkuOnce(run.id, series.map((s) => s.sku))
    expect(await stopWorkerProcess(next)).toBe(0)
  })
})
