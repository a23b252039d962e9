import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { PrivateRedis, startApiProcess, stopProcess, until, type ApiProcess } from '../helpers/processes.js'
import { uniquePrefix } from '../helpers/redis.js'
import { syntheticSeries } from '../queue/fixtures.js'
import { startWorkerProcess, stopWorkerProcess, type WorkerProcess } from '../queue/worker-process.js'

/**
 * Redis dies (SIGKILL) in the middle of a run and comes back on the same port
 * with its append-only file (fsync on every write). The API and a worker
 * process keep running through the outage and must reconnect by themselves:
 * the run ends (succeeded, or failed with a reason), nothing committed before
 * the outage is lost, and the API answers quickly during the outage.
 */

let redis: PrivateRedis
let api: ApiProcess
let worker: WorkerProcess
const prefix = uniquePrefix('fault-redis-restart')

const env = () => ({ REDIS_URL: redis.url, REDIS_PREFIX: prefix })

beforeAll(async () => {
  redis = await PrivateRedis.start()
  api = await startApiProcess({ ...env(), CHUNK_SIZE: '25' })
  worker = startWorkerProcess({
    ...env(),
    CHUNK_SIZE: '25',
    WORKER_CONCURRENCY: '1',
    WORKER_LOCK_DURATION_MS: '2000',
    WORKER_STALLED_INTERVAL_MS: '1000',
  })
  await worker.waitForLog('chunk worker started')
})

afterAll(async () => {
  if (worker) await stopWorkerProcess(worker, 10_000)
  if (api) await stopProcess(api, 10_000)
  await redis?.destroy()
})

const call = async (path: string, init: RequestInit = {}) => {
  const res = await fetch(`${api.baseUrl}${path}`, {
    ...init,
    headers: { 'content-type': 'application/json', ...(init.headers ?? {}) },
    signal: AbortSignal.timeout(15_000),
  })
  const text = await res.text()
  return { status: res.status, type: res.headers.get('content-type') ?? '', body: text ? JSON.parse(text) : undefined }
}

async function allResults(runId: string): Promise<{ sku: string }[]> {
  const items: { sku: string }[] = []
  let cursor: string | null = null
  do {
    const q: string = cursor ? `?limit=1000&cursor=${encodeURIComponent(cursor)}` : '?limit=1000'
    const res = await call(`/v1/runs/${runId}/results${q}`)
    expect(res.status).toBe(200)
    items.push(...res.body.items)
    cursor = res.body.nextCursor
  } while (cursor)
  return items
}

describe('Redis restarted mid-run (append-only file, fsync always)', { timeout: 150_000 }, () => {
  it('the run ends with every SKU once; stored histories and finished results survive', async () => {
    // Stored histories written before the outage.
    const histories = syntheticSeries(12, 36, 'STORED')
    for (const h of histories) {
      const res = await call(`/v1/skus/${h.sku}/history`, {
        method: 'PUT',
        body: JSON.stringify({ frequency: 'month', firstPeriod: '2022-01', demand: h.demand, tags: ['site:north'] }),
      })
      expect(res.status).toBe(201)
    }

    // Long series and several origins make each 25-series chunk take a noticeable time.
    const series = syntheticSeries(250, 144, 'OUTAGE')
    const submitted = await call('/v1/runs', {
      method: 'POST',
      body: JSON.stringify({ horizon: 12, frequency: 'month', holdoutOrigins: 4, series }),
    })
    expect(submitted.status).toBe(202)
    const runId: string = submitted.body.id

    const before = await until(async () => {
      const r = await call(`/v1/runs/${runId}`)
      return r.body.progress.done >= 25 && r.body.status === 'running' ? r.body : undefined
    }, 60_000, 'the first committed chunk')
    const resultsBefore = await allResults(runId)
    expect(resultsBefore.length).toBeGreaterThanOrEqual(before.progress.done)
    expect(resultsBefore.length).toBeLessThan(250) // the outage hits the run mid-way

    await redis.kill()
    // During the outage the API answers at once with a problem, never hangs or crashes.
    const during = await call(`/v1/runs/${runId}`)
    expect(during.status, JSON.stringify(during.body)).toBe(503)
    expect(during.type).toContain('application/problem+json')
    expect(during.body.title).toBe('Service not ready')
    expect((await call('/readyz')).status).toBe(503)
    await new Promise((r) => setTimeout(r, 1500))
    await redis.restart()

    const ended = await until(async () => {
      const r = await call(`/v1/runs/${runId}`)
      return r.status === 200 && r.body.status !== 'queued' && r.body.status !== 'running' ? r.body : undefined
    }, 90_000, 'the run to end after the restart')
    expect(api.child.exitCode).toBeNull()
    expect(worker.child.exitCode).toBeNull()
    // A short outage is within the chunk retries (4 attempts, backoff from 1 s): the run succeeds.
    expect(ended.failure ?? null, 'a failed run must say why').toBeNull()
    expect(ended.status).toBe('succeeded')
    expect(ended.progress).toEqual({ total: 250, done: 250, failed: 0 })

    // Nothing committed before the outage was lost; no SKU appears twice.
    const after = await allResults(runId)
    const skus = after.map((i) => i.sku)
    expect(new Set(skus).size).toBe(skus.length)
    for (const item of resultsBefore) expect(skus).toContain(item.sku)
    expect([...skus].sort()).toEqual(series.map((s) => s.sku).sort())

    for (const h of histories) {
      const res = await call(`/v1/skus/${h.sku}/history`)
      expect(res.status).toBe(200)
      expect(res.body.demand).toEqual(h.demand)
      expect(res.body.tags).toEqual(['site:north'])
    }
    expect(worker.logs.filter((l) => l.level === 60)).toEqual([])
  })

  it('an outage longer than the chunk lock (SHUTDOWN NOSAVE, 6 s down): still every SKU exactly once', async () => {
    // Locks expire while Redis is down (their TTLs are absolute), so the stalled check may hand the
    // chunk in flight to a second attempt while the first still runs: the commit must count it once.
    const series = syntheticSeries(400, 144, 'LONGOUT')
    const submitted = await call('/v1/runs', {
      method: 'POST',
      body: JSON.stringify({ horizon: 12, frequency: 'month', holdoutOrigins: 4, series }),
    })
    expect(submitted.status).toBe(202)
    const runId: string = submitted.body.id
    await until(async () => {
      const r = await call(`/v1/runs/${runId}`)
      return r.body.progress.done >= 25 && r.body.status === 'running' ? true : undefined
    }, 60_000, 'the first committed chunk')
    const resultsBefore = await allResults(runId)
    expect(resultsBefore.length).toBeLessThan(400) // the outage hits the run mid-way

    await redis.shutdownNoSave()
    const down = Date.now()
    // A run submitted during the outage is refused with a 503 to retry, not half stored.
    const refused = await call('/v1/runs', { method: 'POST', body: JSON.stringify({ horizon: 3, series: series.slice(0, 2) }) })
    expect(refused.status).toBe(503)
    expect(refused.body.title).toBe('Service not ready')
    await new Promise((r) => setTimeout(r, Math.max(0, 6000 - (Date.now() - down))))
    await redis.restart()

    const ended = await until(async () => {
      const r = await call(`/v1/runs/${runId}`)
      return r.status === 200 && r.body.status !== 'queued' && r.body.status !== 'running' ? r.body : undefined
    }, 90_000, 'the run to end after the restart')
    expect(ended.failure ?? null, 'a failed run must say why').toBeNull()
    expect(ended.status).toBe('succeeded')
    expect(ended.progress).toEqual({ total: 400, done: 400, failed: 0 })
    const skus = (await allResults(runId)).map((i) => i.sku)
    expect([...skus].sort()).toEqual(series.map((s) => s.sku).sort())
    for (const item of resultsBefore) expect(skus).toContain(item.sku)
    expect(worker.child.exitCode).toBeNull()
  })
})
