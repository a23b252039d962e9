import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startApiProcess, stopProcess, until, type ApiProcess } from '../helpers/processes.js'
import { PrivateRedisCluster } from '../helpers/redis-cluster.js'
import { uniquePrefix } from '../helpers/redis.js'
import { syntheticSeries } from '../queue/fixtures.js'
import { startWorkerProcess, stopWorkerProcess, type WorkerProcess } from '../queue/worker-process.js'

/**
 * The service on a Redis Cluster: a private 3-primary cluster built from the
 * machine's redis-server, the API process (src/server.ts, RUN_WORKER=false)
 * and two worker processes (src/worker-main.ts, as two machines would run
 * them), all configured with REDIS_CLUSTER_NODES only. Every call that
 * touches keys of two slots at once would fail here with CROSSSLOT.
 */

const prefix = uniquePrefix('redis-cluster')
const KEY = 'garden-cluster-key-0123456789'
let cluster: PrivateRedisCluster | undefined
let api: ApiProcess | undefined
const workers: WorkerProcess[] = []

beforeAll(async () => {
  cluster = await PrivateRedisCluster.start(3)
  const env = { REDIS_CLUSTER_NODES: cluster.nodesEnv, REDIS_PREFIX: prefix, CHUNK_SIZE: '25', WORKER_CONCURRENCY: '1' }
  workers.push(startWorkerProcess(env), startWorkerProcess(env))
  api = await startApiProcess({ ...env, API_KEYS: `garden:${KEY}` })
  await Promise.all(workers.map((w) => w.waitForLog('chunk worker started')))
}, 90_000)

afterAll(async () => {
  await Promise.allSettled([...workers.map((w) => stopWorkerProcess(w, 10_000)), ...(api ? [stopProcess(api, 10_000)] : [])])
  await cluster?.destroy()
}, 30_000)

/** Error answers (4xx, 5xx) seen anywhere in the test that were not expected. */
const unexpected: string[] = []

/** Polls the run until it leaves queued/running; a timeout names the last answer. */
async function runEnded(runId: string, timeoutMs: number) {
  let last: unknown
  return until(
    async () => {
      const r = await call(`/v1/runs/${runId}`)
      last = r.body
      return r.status === 200 && r.body.status !== 'queued' && r.body.status !== 'running' ? r.body : undefined
    },
    timeoutMs,
    `run ${runId} to finish`,
  ).catch((err: Error) => {
    throw new Error(`${err.message}; last answer: ${JSON.stringify(last)}`)
  })
}

/**
 * A SKU's latest forecast, polled: a run is marked succeeded when its last chunk commits,
 * and that chunk's latest-forecast records are written just after (docs/run-machinery.md).
 */
const latestForecast = (sku: string) =>
  until(
    async () => {
      const r = await call(`/v1/skus/${encodeURIComponent(sku)}/forecast`, { expect: 404 })
      return r.status === 200 ? r.body : undefined
    },
    10_000,
    `the latest forecast of ${sku}`,
  )

const call = async (path: string, init: RequestInit & { expect?: number } = {}) => {
  const res = await fetch(`${api!.baseUrl}${path}`, {
    ...init,
    headers: { 'content-type': 'application/json', authorization: `Bearer ${KEY}`, ...(init.headers ?? {}) },
    signal: AbortSignal.timeout(15_000),
  })
  // eslint-disable-next-line @typescript-eslint/no-explicit-any -- response bodies are read field by field
  const body = res.status === 204 ? null : ((await res.json()) as any)
  if (res.status >= 400 && res.status !== init.expect) unexpected.push(`${path}: ${res.status} ${JSON.stringify(body)}`)
  return { status: res.status, body }
}

// Generous time limits: a shared 2-core machine under load; about 25-35 s on a quiet one.
describe('Redis Cluster (3 primaries)', { timeout: 120_000 }, () => {
  it('a run of 300 SKUs is fitted by two worker processes; every SKU has exactly one result', async () => {
    const series = syntheticSeries(300, 36, 'CLUSTER')
    const submitted = await call('/v1/runs', {
      method: 'POST',
      headers: { 'idempotency-key': 'cluster-run-1' },
      body: JSON.stringify({ horizon: 6, frequency: 'month', series, publish: true }),
    })
    expect(submitted.status).toBe(202)
    const runId: string = submitted.body.id

    const ended = await runEnded(runId, 90_000)
    expect([ended.status, ended.failure ?? null]).toEqual(['succeeded', null])
    expect(ended.progress).toEqual({ total: 300, done: 300, failed: 0 })

    // Every page, by cursor: each SKU exactly once.
    const seen: string[] = []
    let cursor: string | null = null
    let pages = 0
    do {
      const page: { status: number; body: { items: { sku: string }[]; nextCursor: string | null } } = await call(
        `/v1/runs/${runId}/results?limit=70${cursor ? `&cursor=${encodeURIComponent(cursor)}` : ''}`,
      )
      expect(page.status).toBe(200)
      seen.push(...page.body.items.map((i) => i.sku))
      cursor = page.body.nextCursor
      pages++
    } while (cursor !== null && pages < 20)
    expect(pages).toBe(5)
    expect(seen).toEqual(series.map((s) => s.sku).sort())

    const latest = await latestForecast(series[42]!.sku)
    expect(latest).toMatchObject({ sku: series[42]!.sku, runId })
    expect(latest.forecast).toHaveLength(6)

    // The same Idempotency-Key replays the first answer instead of a second run.
    const again = await call('/v1/runs', {
      method: 'POST',
      headers: { 'idempotency-key': 'cluster-run-1' },
      body: JSON.stringify({ horizon: 6, frequency: 'month', series, publish: true }),
    })
    expect(again.body.id).toBe(runId)

    // 12 chunks of 25, each committed once across the two worker processes.
    const committed = workers.flatMap((w) => w.chunksOf(runId)).sort((a, b) => a - b)
    expect(committed).toEqual(Array.from({ length: 12 }, (_, i) => i))

    // The queues live under the braced prefix (one hash tag); nothing of BullMQ under the plain one.
    const queueKeys = (await cluster!.keysPerNode(`{${prefix}}:*`)).flat()
    expect(queueKeys.some((k) => k.startsWith(`{${prefix}}:run-chunks:`))).toBe(true)
    const plain = (await cluster!.keysPerNode(`${prefix}:*`)).flat()
    expect(plain.filter((k) => /:(run-chunks|callbacks|schedules):/.test(k) && !k.includes(':t:'))).toEqual([])
    expect(plain).toContain(`${prefix}:t:garden:run:{${runId}}`)
    expect(unexpected).toEqual([])
  })
  it('stored histories, a run over them, accuracy scoring and schedules', async () => {
    // Each history write is a Lua script over the tenant's data, meta, index and tag sets
    // (one hash tag per tenant), sent in a pipeline.
    const flat = Array.from({ length: 24 }, () => 100)
    for (const sku of ['HOSE-A', 'HOSE-B', 'HOSE-C']) {
      const put = await call(`/v1/skus/${sku}/history`, {
        method: 'PUT',
        body: JSON.stringify({ frequency: 'month', firstPeriod: '2024-01', demand: flat, tags: ['category:garden'] }),
      })
      expect(put.status).toBe(201)
    }
    const submitted = await call('/v1/runs', { method: 'POST', body: JSON.stringify({ horizon: 6, scope: { skus: ['HOSE-A', 'HOSE-B', 'HOSE-C'] } }) })
    expect(submitted.status).toBe(202)
    const runId: string = submitted.body.id
    const ended = await runEnded(runId, 60_000)
    expect([ended.status, ended.progress.done]).toEqual(['succeeded', 3])
    expect((await latestForecast('HOSE-A')).runId).toBe(runId)

    // Hand-checkable: a constant history forecasts its level, 100, for 2026-01..2026-06. Actuals
    // 130, 125, 140, 135, 120 give errors +30, +25, +40, +35, +20: MAE 30, bias +30, tracking
    // signal 150 / 30 = 5, beyond the default limit 4, so the SKU is listed as an exception.
    const actuals = await call('/v1/skus/HOSE-A/history', {
      method: 'PUT',
      body: JSON.stringify({ frequency: 'month', firstPeriod: '2024-01', demand: [...flat, 130, 125, 140, 135, 120], tags: ['category:garden'] }),
    })
    expect(actuals.status).toBe(200)
    const acc = await call('/v1/skus/HOSE-A/accuracy')
    expect(acc.status).toBe(200)
    expect(acc.body).toMatchObject({ sku: 'HOSE-A', scoredPeriods: 5, mae: 30, bias: 30, trackingSignal: 5, flagged: true })
    const exceptions = await call('/v1/accuracy/exceptions')
    expect(exceptions.body.items.map((i: { sku: string }) => i.sku)).toEqual(['HOSE-A'])
    // The run's published summaries (one script per chunk over the tenant's summary sets, one hash tag),
    // filtered together with the exception list, which lies in another slot.
    const warned = await call('/v1/skus?warning=constant-series&failed=false')
    expect(warned.body.items.map((i: { sku: string; published: { runId: string } }) => [i.sku, i.published.runId])).toEqual([
      ['HOSE-A', runId],
      ['HOSE-B', runId],
      ['HOSE-C', runId],
    ])
    const flaggedToo = await call('/v1/skus?warning=constant-series&exception=true')
    expect(flaggedToo.body.items.map((i: { sku: string }) => i.sku)).toEqual(['HOSE-A'])

    // A schedule's hash and the tenant's schedule index lie in different slots.
    const created = await call('/v1/schedules', {
      method: 'POST',
      body: JSON.stringify({ name: 'garden nightly', cron: '0 2 * * *', timeZone: 'Europe/Berlin', scope: { tags: ['category:garden'] }, horizon: 6 }),
    })
    expect(created.status).toBe(201)
    const second = await call('/v1/schedules', {
      method: 'POST',
      body: JSON.stringify({ name: 'garden weekly', cron: '0 3 * * 1', timeZone: 'UTC', scope: { all: true }, horizon: 6 }),
    })
    expect(second.status).toBe(201)
    const listed = await call('/v1/schedules')
    expect(listed.body.items.map((s: { name: string }) => s.name)).toEqual(['garden nightly', 'garden weekly'])
    expect((await call(`/v1/schedules/${created.body.id}`, { method: 'DELETE' })).status).toBe(204)
    expect((await call('/v1/schedules')).body.items.map((s: { name: string }) => s.name)).toEqual(['garden weekly'])
    expect(api!.logs.filter((l) => Number(l.level) >= 40).map((l) => l.msg)).toEqual([])
    expect(unexpected).toEqual([])
  })
})
