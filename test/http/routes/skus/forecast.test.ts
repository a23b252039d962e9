import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import { build } from '../../../../src/http/app.js'
import { InMemoryGatewayDouble, KEY_GARDEN, KEY_HEATING, auth, forecastItemFixture, testConfig } from '../../gateway-double.js'

/** As served without adjustments: each point's finalDemand is its (statistical) demand, adjustment null. */
function served<T extends { forecast: readonly { demand: number }[] }>(item: T): T {
  return { ...item, forecast: item.forecast.map((p) => ({ ...p, finalDemand: p.demand, adjustment: null })) }
}

describe('GET /v1/skus/{sku}/forecast', () => {
  let app: FastifyInstance
  let runId: string
  beforeAll(async () => {
    const gateway = new InMemoryGatewayDouble()
    app = await build({ config: testConfig(), gateway })
    const run = await gateway.submit('garden', {
      horizon: 1,
      frequency: 'month',
      rankBy: 'mase',
      intervalLevels: [80, 95],
      missingPeriods: 'zero',
      allowNegativeDemand: false,
      keepLeadingZeros: false,
      holdoutOrigins: 1,
      series: [],
    })
    runId = run.id
    gateway.complete(runId, [forecastItemFixture('SEED/TOMATO 50G'), { sku: 'BAD', frequency: 'month', failure: { code: 'empty-series', message: 'x' } }])
  })
  afterAll(() => app.close())

  it('returns the latest successful forecast with its run and time (SKU URL-encoded)', async () => {
    const res = await app.inject({ url: `/v1/skus/${encodeURIComponent('SEED/TOMATO 50G')}/forecast`, headers: auth(KEY_GARDEN) })
    expect(res.statusCode).toBe(200)
    expect(res.json()).toEqual({
      ...served(forecastItemFixture('SEED/TOMATO 50G') as Extract<ReturnType<typeof forecastItemFixture>, { forecast: unknown }>),
      runId,
      producedAt: '2026-01-05T08:00:02.000Z',
    })
  })

  it('?view=compact leaves out candidates', async () => {
    const res = await app.inject({ url: `/v1/skus/${encodeURIComponent('SEED/TOMATO 50G')}/forecast?view=compact`, headers: auth(KEY_GARDEN) })
    expect(res.statusCode).toBe(200)
    const { candidates: _c, ...rest } = forecastItemFixture('SEED/TOMATO 50G') as ReturnType<typeof forecastItemFixture> & { candidates: unknown }
    expect(res.json()).toEqual({ ...served(rest as typeof rest & { forecast: { demand: number }[] }), runId, producedAt: '2026-01-05T08:00:02.000Z' })
  })

  it('404 for a SKU never forecast, for a failed one, and for another tenant', async () => {
    const never = await app.inject({ url: '/v1/skus/NOPE/forecast', headers: auth(KEY_GARDEN) })
    expect(never.statusCode).toBe(404)
    expect(never.json()).toMatchInlineSnapshot(`
      {
        "detail": "No forecast for SKU NOPE",
        "status": 404,
        "title": "Not found",
        "type": "https://almanac.example/problems/not-found",
      }
    `)
    const failed = await app.inject({ url: '/v1/skus/BAD/forecast', headers: auth(KEY_GARDEN) })
    expect(failed.statusCode).toBe(404)
    const other = await app.inject({ url: `/v1/skus/${encodeURIComponent('SEED/TOMATO 50G')}/forecast`, headers: auth(KEY_HEATING) })
    expect(other.statusCode).toBe(404)
  })

  it('rejects a SKU with control characters', async () => {
    const res = await app.inject({ url: '/v1/skus/A%01B/forecast', headers: auth(KEY_GARDEN) })
    expect(res.statusCode).toBe(400)
    expect(res.json().errors).toEqual([{ path: 'sku', message: 'must not contain control characters or lone UTF-16 surrogates' }])
  })
})
