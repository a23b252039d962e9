import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createHash } from 'node:crypto'
import type { FastifyInstance } from 'fastify'
import { Redis } from 'ioredis'
import { build } from '../../../src/http/app.js'
import { createLogger } from '../../../src/logger.js'
import { createRunGateway, type RunMachinery } from '../../../src/queue/gateway.js'
import { startProcessWorkers, type ProcessWorkers } from '../../../src/worker-main.js'
import type { Config } from '../../../src/config.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../../helpers/redis.js'
import { runsTestConfig, syntheticSeries, waitFor } from '../../queue/fixtures.js'

// GET /metrics of the real app while a sandboxed worker (its own threads) fits a run:
// runs by status and the workers' fit counts come from Redis, not from this process.
const KEY = 'garden-metrics-key-0123456789abcdef'
const auth = { authorization: `Bearer ${KEY}` }

let url: string
let prefix: string
let config: Config
let app: FastifyInstance
let gateway: RunMachinery
let workers: ProcessWorkers | undefined
let rateLimitRedis: Redis

beforeAll(async () => {
  url = await redisUrlForTests()
  prefix = uniquePrefix('metrics-redis')
  config = runsTestConfig(url, prefix, {
    apiKeys: new Map([['garden', [createHash('sha256').update(KEY, 'utf8').digest('hex')]]]),
    chunkSize: 2,
    workerConcurrency: 1,
    // Scraped before and after the run: read Redis on every scrape.
    metricsCacheMs: 0,
  })
  gateway = createRunGateway(config, { logger: createLogger({ level: 'silent' }) })
  rateLimitRedis = new Redis(url, { maxRetriesPerRequest: 2 })
  app = await build({ config, gateway, logger: createLogger({ level: 'silent' }), rateLimitRedis })
})

afterAll(async () => {
  await app?.close()
  await workers?.close()
  await gateway?.close()
  rateLimitRedis?.disconnect()
  if (url && prefix) await deleteKeys(url, prefix)
})

const metricsText = async () => (await app.inject({ url: '/metrics' })).body

describe('GET /metrics with runs fitted by a worker', () => {
  it('shows runs by status and the series the worker fitted', async () => {
    // A run cancelled before any worker exists: queued -> cancelled.
    const cancelled = (await app.inject({ method: 'POST', url: '/v1/runs', headers: auth, payload: { horizon: 3, series: syntheticSeries(3) } })).json()
    expect(await metricsText()).toContain('almanac_runs{status="queued"} 1')
    expect((await app.inject({ method: 'DELETE', url: `/v1/runs/${cancelled.id}`, headers: auth })).statusCode).toBe(200)

    // Four good series and one the engine rejects, in three chunks of at most two.
    const series = [...syntheticSeries(4, 36, 'RAKE'), { sku: 'GAP', demand: [null, null, null] }]
    const res = await app.inject({ method: 'POST', url: '/v1/runs', headers: auth, payload: { horizon: 3, frequency: 'month', series } })
    expect(res.statusCode).toBe(202)
    const runId = res.json().id
    workers = startProcessWorkers(config, createLogger({ level: 'silent' }))
    const run = await waitFor(async () => {
      const r = (await app.inject({ url: `/v1/runs/${runId}`, headers: auth })).json()
      return r.status === 'queued' || r.status === 'running' ? undefined : r
    }, 90_000, 'the run to finish')
    expect(run.status).toBe('succeeded')
    expect(run.progress).toEqual({ total: 5, done: 5, failed: 1 })

    const text = await metricsText()
    expect(text).toContain('# TYPE almanac_runs gauge')
    expect(text).toContain('almanac_runs{status="queued"} 0')
    expect(text).toContain('almanac_runs{status="running"} 0')
    expect(text).toContain('almanac_runs{status="succeeded"} 1')
    expect(text).toContain('almanac_runs{status="cancelled"} 1')
    expect(text).toContain('almanac_runs{status="failed"} 0')
    expect(text).toContain('almanac_series_fitted_total{source="worker",outcome="ok"} 4')
    expect(text).toContain('almanac_series_fitted_total{source="worker",outcome="error"} 1')
    expect(text).toContain('almanac_fit_duration_seconds_bucket{le="+Inf",source="worker"} 5')
    expect(text).toContain('almanac_fit_duration_seconds_count{source="worker"} 5')
    const sum = Number(/almanac_fit_duration_seconds_sum\{source="worker"\} (\S+)/.exec(text)?.[1])
    expect(sum).toBeGreaterThan(0)
    expect(text).toMatch(/almanac_queue_jobs\{state="waiting"\} 0/)
  }, 120_000)
})
