import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startApiProcess, stopProcess, until, type ApiProcess } from '../helpers/processes.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../helpers/redis.js'
import { syntheticSeries } from '../queue/fixtures.js'
import { startWorkerProcess, stopWorkerProcess, type WorkerProcess } from '../queue/worker-process.js'

/**
 * The API process (src/server.ts, RUN_WORKER=false) dies mid-run and a new
 * one starts on the same port; a separate worker process keeps working. The
 * API holds no state of its own: the run, its progress and its results are
 * all in Redis, so polling simply resumes.
 */

let url: string
const prefix = uniquePrefix('fault-api-restart')
const apis: ApiProcess[] = []
let worker: WorkerProcess

beforeAll(async () => {
  url = await redisUrlForTests()
  worker = startWorkerProcess({ REDIS_URL: url, REDIS_PREFIX: prefix, CHUNK_SIZE: '25', WORKER_CONCURRENCY: '1' })
  await worker.waitForLog('chunk worker started')
})

afterAll(async () => {
  if (worker) await stopWorkerProcess(worker, 10_000)
  await Promise.all(apis.map((a) => stopProcess(a, 10_000)))
  if (url) await deleteKeys(url, prefix)
})

const KEY = 'garden-fault-key-0123456789'
const startApi = async (port?: number) => {
  const api = await startApiProcess({ REDIS_URL: url, REDIS_PREFIX: prefix, CHUNK_SIZE: '25', API_KEYS: `garden:${KEY}` }, port)
  apis.push(api)
  return api
}

/** Error answers (4xx, 5xx) seen anywhere in the test: there should be none. */
const serverErrors: string[] = []

const call = async (api: ApiProcess, path: string, init: RequestInit = {}) => {
  const res = await fetch(`${api.baseUrl}${path}`, {
    ...init,
    headers: { 'content-type': 'application/json', authorization: `Bearer ${KEY}` },
    signal: AbortSignal.timeout(15_000),
  })
  // eslint-disable-next-line @typescript-eslint/no-explicit-any -- response bodies are read field by field
  const body = (await res.json()) as any
  if (res.status >= 400) serverErrors.push(`${path}: ${res.status} ${JSON.stringify(body)}`)
  return { status: res.status, body }
}

describe('API process restarted mid-run', { timeout: 120_000 }, () => {
  it('the run, its progress and its results survive; polling resumes on the new process', async () => {
    const first = await startApi()
    const series = syntheticSeries(200, 144, 'APIKILL')
    const submitted = await call(first, '/v1/runs', {
      method: 'POST',
      body: JSON.stringify({ horizon: 12, frequency: 'month', holdoutOrigins: 4, series, publish: true }),
    })
    expect(submitted.status).toBe(202)
    const runId: string = submitted.body.id

    const before = await until(async () => {
      const r = await call(first, `/v1/runs/${runId}`)
      return r.body.progress.done >= 25 && r.body.status === 'running' ? r.body : undefined
    }, 60_000, 'a committed chunk')

    first.child.kill('SIGKILL')
    expect(await first.exited).toBe('SIGKILL')
    const port = Number(new URL(first.baseUrl).port)
    const second = await startApi(port)
    expect(second.baseUrl).toBe(first.baseUrl)

    // Progress never goes back across the restart.
    const resumed = await call(second, `/v1/runs/${runId}`)
    expect(resumed.status).toBe(200)
    expect(resumed.body.progress.done).toBeGreaterThanOrEqual(before.progress.done)
    expect(resumed.body.createdAt).toBe(before.createdAt)

    const ended = await until(async () => {
      const r = await call(second, `/v1/runs/${runId}`)
      return r.status === 200 && r.body.status !== 'queued' && r.body.status !== 'running' ? r.body : undefined
    }, 90_000, 'the run to finish')
    expect(ended.status).toBe('succeeded')
    expect(ended.progress).toEqual({ total: 200, done: 200, failed: 0 })

    const page = await call(second, `/v1/runs/${runId}/results?limit=1000`)
    expect(page.status).toBe(200)
    expect(page.body.nextCursor).toBeNull()
    const skus = page.body.items.map((i: { sku: string }) => i.sku)
    expect(skus.length).toBe(200)
    expect([...skus].sort()).toEqual(series.map((s) => s.sku).sort())
    // The latest forecast of a SKU is served by the new process too.
    expect((await call(second, `/v1/skus/${series[0]!.sku}/forecast`)).body.runId).toBe(runId)
    expect(serverErrors).toEqual([])
  })
})
