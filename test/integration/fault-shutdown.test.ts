import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Queue } from 'bullmq'
import { Redis } from 'ioredis'
import { CHUNK_QUEUE } from '../../src/queue/names.js'
import { startApiProcess, stopProcess, until, type ApiProcess } from '../helpers/processes.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../helpers/redis.js'
import { syntheticSeries } from '../queue/fixtures.js'
import { startWorkerProcess, type WorkerProcess } from '../queue/worker-process.js'

/**
 * SIGTERM to `npm start` (src/server.ts with its in-process chunk worker) in
 * the middle of a run. test/integration/runs-processes.test.ts covers SIGTERM
 * and SIGKILL of `npm run worker` processes; this covers the API's own
 * shutdown path (HTTP server first, then workers). Nothing may be left active
 * without a lock, and a fresh worker finishes the run without waiting for a
 * stalled check.
 */

let url: string
const prefix = uniquePrefix('fault-shutdown')
let redis: Redis
let queue: Queue
const children: (ApiProcess | WorkerProcess)[] = []

beforeAll(async () => {
  url = await redisUrlForTests()
  redis = new Redis(url)
  queue = new Queue(CHUNK_QUEUE, { connection: { url }, prefix })
})

afterAll(async () => {
  await Promise.all(children.map((c) => stopProcess(c, 10_000)))
  await queue?.close()
  redis?.disconnect()
  if (url) await deleteKeys(url, prefix)
})

/** Error answers (4xx, 5xx) seen anywhere in the test: there should be none. */
const serverErrors: string[] = []

const call = async (api: ApiProcess, path: string, init: RequestInit = {}) => {
  const res = await fetch(`${api.baseUrl}${path}`, {
    ...init,
    headers: { 'content-type': 'application/json' },
    signal: AbortSignal.timeout(15_000),
  })
  // eslint-disable-next-line @typescript-eslint/no-explicit-any -- response bodies are read field by field
  const body = (await res.json()) as any
  if (res.status >= 400) serverErrors.push(`${path}: ${res.status} ${JSON.stringify(body)}`)
  return { status: res.status, body }
}

describe('graceful shutdown of the API with its in-process worker', { timeout: 120_000 }, () => {
  it('SIGTERM mid-run: exits 0, no chunk left active, a new worker finishes the run at once', async () => {
    // Stalled checks are slow here (60 s), so a chunk left active would make the run miss the deadline below.
    const env = {
      REDIS_URL: url,
      REDIS_PREFIX: prefix,
      CHUNK_SIZE: '25',
      WORKER_CONCURRENCY: '1',
      WORKER_LOCK_DURATION_MS: '60000',
      WORKER_STALLED_INTERVAL_MS: '60000',
    }
    const api = await startApiProcess({ ...env, RUN_WORKER: 'true' })
    children.push(api)
    const series = syntheticSeries(250, 144, 'TERMAPI')
    const submitted = await call(api, '/v1/runs', {
      method: 'POST',
      body: JSON.stringify({ horizon: 12, frequency: 'month', holdoutOrigins: 4, series }),
    })
    expect(submitted.status).toBe(202)
    const runId: string = submitted.body.id
    await until(async () => {
      const r = await call(api, `/v1/runs/${runId}`)
      return r.body.progress.done >= 25 && (await queue.getActiveCount()) > 0 ? true : undefined
    }, 60_000, 'a committed chunk and one in flight')

    api.child.kill('SIGTERM')
    expect(await api.exited).toBe(0)
    expect(api.logs.some((l) => l.msg === 'chunk worker stopped')).toBe(true)
    expect(api.logs.filter((l) => Number(l.level) >= 50)).toEqual([])

    // Nothing active, and no lock left behind.
    expect(await queue.getActiveCount()).toBe(0)
    expect(await redis.keys(`${prefix}:${CHUNK_QUEUE}:*:lock`)).toEqual([])
    const reader = await startApiProcess(env)
    children.push(reader)
    const rest = startWorkerProcess(env)
    children.push(rest)
    const run = await until(async () => {
      const r = await call(reader, `/v1/runs/${runId}`)
      return r.status === 200 && r.body.status !== 'queued' && r.body.status !== 'running' ? r.body : undefined
    }, 45_000, 'the rest of the run on a new worker (well under the 60 s stalled interval)')
    expect(run.status).toBe('succeeded')
    expect(run.progress).toEqual({ total: 250, done: 250, failed: 0 })
    expect(rest.processedOf(runId).length).toBeGreaterThan(0)
    expect(await queue.getFailedCount()).toBe(0)

    // Every SKU exactly once.
    const page = await call(reader, `/v1/runs/${runId}/results?limit=1000`)
    expect(page.body.nextCursor).toBeNull()
    const skus = page.body.items.map((i: { sku: string }) => i.sku)
    expect([...skus].sort()).toEqual(series.map((s) => s.sku).sort())
    expect(serverErrors).toEqual([])
  })
})
