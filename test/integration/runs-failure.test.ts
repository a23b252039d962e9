import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Queue } from 'bullmq'
import { Redis } from 'ioredis'
import { CHUNK_QUEUE, chunkJobId } from '../../src/queue/names.js'
import { createRunGateway, type RunMachinery } from '../../src/queue/gateway.js'
import { startChunkWorker, type ChunkWorker } from '../../src/queue/worker.js'
import { createLogger } from '../../src/logger.js'
import { runKeys } from '../../src/storage/keys.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../helpers/redis.js'
import { runRequest, runsTestConfig, syntheticSeries, waitFor } from '../queue/fixtures.js'
import { startWorkerProcess } from '../queue/worker-process.js'

let url: string
let prefix: string
let gateway: RunMachinery
let workers: ChunkWorker | undefined
let redis: Redis

beforeAll(async () => {
  url = await redisUrlForTests()
  prefix = uniquePrefix('runs-failure')
  gateway = createRunGateway(runsTestConfig(url, prefix), { logger: createLogger({ level: 'silent' }) })
  redis = new Redis(url)
})

afterAll(async () => {
  await workers?.close()
  await gateway?.close()
  redis?.disconnect()
  if (url && prefix) await deleteKeys(url, prefix)
})

describe('run failure', { timeout: 120_000 }, () => {
  it('fails the run when a chunk cannot be processed (its input expired)', async () => {
    const run = await gateway.submit('acme', runRequest(syntheticSeries(30)))
    await redis.del(runKeys(prefix, 'acme', run.id).input(1))
    workers = startChunkWorker(runsTestConfig(url, prefix), createLogger({ level: 'silent' }))
    const r = await waitFor(async () => {
      const x = await gateway.get('acme', run.id)
      return x?.status === 'failed' ? x : undefined
    }, 30_000, 'run to fail')
    expect(r.failure).toEqual({ code: 'chunk-failed', message: 'chunk 1 failed: input of chunk 1 is missing (expired?)' })
    expect(r.summary).toBeNull()
    expect(r.finishedAt).not.toBeNull()
  })
})

describe('retries', { timeout: 120_000 }, () => {
  it('retries a chunk that failed for a reason other than its data, with backoff, and the run succeeds', async () => {
    const queue = new Queue(CHUNK_QUEUE, { connection: { url }, prefix })
    try {
      workers ??= startChunkWorker(runsTestConfig(url, prefix), createLogger({ level: 'silent' }))
      await workers.worker.pause()
      const run = await gateway.submit('acme', runRequest(syntheticSeries(15)))
      // Break chunk 0's stored input so the first attempt throws (a SyntaxError, not an engine error).
      const key = runKeys(prefix, 'acme', run.id).input(0)
      const original = await redis.get(key)
      await redis.set(key, '{not json', 'KEEPTTL')
      workers.worker.resume()
      const job = await waitFor(async () => {
        const j = await queue.getJob(chunkJobId(run.id, 0))
        return j && j.attemptsMade >= 1 ? j : undefined
      }, 30_000, 'a failed first attempt')
      expect(job.failedReason).toMatch(/JSON/)
      // Repair it during the backoff: the next attempt succeeds.
      await redis.set(key, original!, 'KEEPTTL')
      const r = await waitFor(async () => {
        const x = await gateway.get('acme', run.id)
        return x?.status === 'succeeded' ? x : undefined
      }, 60_000, 'run to succeed')
      expect(r.progress).toEqual({ total: 15, done: 15, failed: 0 })
      expect(r.failure).toBeNull()
    } finally {
      await queue.close()
    }
  })
})

describe('worker-main', { timeout: 120_000 }, () => {
  it('exits with one line saying what to start when Redis is unreachable', async () => {
    const w = startWorkerProcess({ REDIS_URL: 'redis://127.0.0.1:1', REDIS_PREFIX: prefix })
    expect(await w.exited).toBe(1)
    expect(w.stderr.join('')).toMatch(
      /^Redis is not reachable at redis:\/\/127\.0\.0\.1:1 \(connect ECONNREFUSED 127\.0\.0\.1:1\): start it \(redis-server\) or set REDIS_URL\n$/,
    )
  })

  it('exits listing the problem on invalid configuration', async () => {
    const w = startWorkerProcess({ REDIS_URL: url, CHUNK_SIZE: 'many' })
    expect(await w.exited).toBe(1)
    expect(w.stderr.join('')).toContain('CHUNK_SIZE')
  })
})
