import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import { build } from '../../../src/http/app.js'
import { InMemoryGatewayDouble, KEY_GARDEN, auth, testConfig } from '../gateway-double.js'

describe('GET /metrics', () => {
  let app: FastifyInstance
  let gateway: InMemoryGatewayDouble
  beforeAll(async () => {
    gateway = new InMemoryGatewayDouble()
    app = await build({ config: testConfig(), gateway })
  })
  afterAll(() => app.close())

  it('exposes request durations, queue depth and fit metrics in Prometheus text format', async () => {
    await app.inject({ url: '/v1/runs/run-404', headers: auth(KEY_GARDEN) })
    await app.inject({
      method: 'POST',
      url: '/v1/forecast',
      headers: auth(KEY_GARDEN),
      payload: { horizon: 2, series: [{ sku: 'A', demand: [3, 4, 5, 6, 5, 4] }, { sku: 'B', demand: [-1, 2] }] },
    })
    const res = await app.inject({ url: '/metrics' })
    expect(res.statusCode).toBe(200)
    expect(res.headers['content-type']).toMatch(/^text\/plain; version=0.0.4/)
    const text = res.body
    expect(text).toContain('# TYPE almanac_http_request_duration_seconds histogram')
    expect(text).toMatch(/almanac_http_request_duration_seconds_count\{route="\/v1\/runs\/:runId",method="GET",status_code="404"\} 1/)
    expect(text).toContain('almanac_queue_jobs{state="waiting"} 3')
    expect(text).toContain('almanac_queue_jobs{state="failed"} 2')
    expect(text).toContain('almanac_series_fitted_total{source="sync",outcome="ok"} 1')
    expect(text).toContain('almanac_series_fitted_total{source="sync",outcome="error"} 1')
    expect(text).toContain('almanac_fit_duration_seconds_count{source="sync"} 2')
    expect(gateway.statsCalls).toBeGreaterThan(0)
  })

  it('still answers when queue stats fail (the gauge is left out of date, not the scrape)', async () => {
    gateway.stats = async () => {
      throw new Error('redis down')
    }
    const res = await app.inject({ url: '/metrics' })
    expect(res.statusCode).toBe(200)
    expect(res.body).toContain('almanac_http_request_duration_seconds')
  })
})
