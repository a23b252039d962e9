import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import { loadItem, storeItem } from '../../src/storage/items/item-codec.js'
import type { ForecastItem } from '../../src/runs/contract.js'
import type { RunMachinery } from '../../src/queue/gateway.js'
import { startService, type TestService } from '../helpers/service.js'
import { syntheticSeries, waitFor } from '../queue/fixtures.js'

// Replenishment figures through the real app, queue and sandboxed worker (Redis at REDIS_URL).
let service: TestService
let app: FastifyInstance
let gateway: RunMachinery

beforeAll(async () => {
  service = await startService('erp-replenishment', { config: { chunkSize: 5, workerConcurrency: 1 } })
  ;({ app, gateway } = service)
})

afterAll(() => service?.close())

type Forecast = ForecastItem

describe('replenishment figures in run results', { timeout: 120_000 }, () => {
  it('adds lead-time demand, safety stock and reorder point to every forecast item', async () => {
    const series = syntheticSeries(8, 36, 'MULCH')
    const res = await app.inject({
      method: 'POST',
      url: '/v1/runs',
      payload: { horizon: 6, series, replenishment: { leadTimePeriods: 3, serviceLevel: 0.95 }, publish: true },
    })
    expect(res.statusCode).toBe(202)
    const id = res.json().id as string
    expect(res.json().settings.replenishment).toEqual({ leadTimePeriods: 3, serviceLevel: 0.95 })
    await waitFor(async () => {
      const run = await gateway.get('default', id)
      return run?.status === 'succeeded' ? run : undefined
    }, 90_000, 'run to succeed')
    const page = (await app.inject({ url: `/v1/runs/${id}/results?limit=100` })).json()
    expect(page.items).toHaveLength(8)
    for (const item of page.items as Forecast[]) {
      const r = item.replenishment!
      const ltd = item.forecast.slice(0, 3).reduce((a, p) => a + p.demand, 0)
      // Stored figures keep 7 significant digits; safety stock and reorder point are whole units, rounded up.
      expect(r.leadTimeDemand).toBeCloseTo(ltd, 3)
      expect(r.coverDemand).toBeCloseTo(ltd, 3)
      expect(r.z).toBeCloseTo(1.6449, 4) // standard normal table, 95 %
      expect(r.sigma).toBeGreaterThan(0)
      expect(r.safetyStock!).toBe(Math.ceil(r.z * r.sigma! - 1e-6))
      expect(Math.abs(r.reorderPoint! - Math.ceil(r.coverDemand + r.z * r.sigma!))).toBeLessThanOrEqual(1)
      expect(r.formula).toBe('summed-step-variance')
      expect(r.periods.map((p) => p.period)).toEqual(item.forecast.slice(0, 4).map((p) => p.period))
    }
    const latest = (await app.inject({ url: '/v1/skus/MULCH-00003/forecast' })).json()
    expect(latest.replenishment.leadTimePeriods).toBe(3)
  })

  it('leaves runs without the option unchanged', async () => {
    const res = await app.inject({ method: 'POST', url: '/v1/forecast', payload: { horizon: 3, series: syntheticSeries(1) } })
    expect(res.statusCode).toBe(200)
    expect(res.json().items[0]).not.toHaveProperty('replenishment')
  })

  it('refuses a lead time beyond the horizon with the field named', async () => {
    const res = await app.inject({
      method: 'POST',
      url: '/v1/runs',
      payload: { horizon: 2, series: syntheticSeries(1), replenishment: { leadTimePeriods: 3, serviceLevel: 0.95 } },
    })
    expect(res.statusCode).toBe(400)
    expect(res.json().errors).toEqual([
      {
        path: 'replenishment.leadTimePeriods',
        message: 'lead time plus review period (3 periods) must not exceed the horizon (2): the demand over them needs a forecast for every period',
      },
    ])
  })

  it('refuses a service level outside (0.5, 0.9999)', async () => {
    const res = await app.inject({
      method: 'POST',
      url: '/v1/runs',
      payload: { horizon: 2, series: syntheticSeries(1), replenishment: { leadTimePeriods: 1, serviceLevel: 1 } },
    })
    expect(res.statusCode).toBe(400)
    expect(res.json().errors[0].path).toBe('replenishment.serviceLevel')
  })

  it('the sync forecast computes the figures too', async () => {
    const res = await app.inject({
      method: 'POST',
      url: '/v1/forecast',
      payload: { horizon: 4, series: syntheticSeries(1), replenishment: { leadTimePeriods: 2, serviceLevel: 0.9 } },
    })
    const item = res.json().items[0]
    expect(item.replenishment.z).toBeCloseTo(1.2816, 4)
    expect(item.replenishment.leadTimeDemand).toBeCloseTo(item.forecast[0].demand + item.forecast[1].demand, 9)
  })
})

describe('stored item codec keeps the figures', () => {
  it('round-trips replenishment and still reads items without it', () => {
    const base = {
      sku: 'RAKE-1',
      frequency: 'month',
      model: 'last-value',
      family: 'level',
      params: {},
      modelChoice: { method: 'none', rankBy: 'mase', holdoutPeriods: 0, holdoutOrigins: 1 },
      holdoutErrors: null,
      candidates: [],
      forecast: [{ period: '2026-01', demand: 10, intervals: [] }],
      intervalMethod: 'none',
      warnings: [],
    } as Forecast
    const replenishment = {
      leadTimePeriods: 0.3285421, reviewPeriods: 0, leadTimeSdPeriods: 0, serviceLevel: 0.95, minimumOrder: 0, packSize: 1,
      leadTimeDemand: 3.285421234, coverDemand: 3.285421234, sigma: 2.123456789, z: 1.6448536269514715,
      safetyStock: 4, reorderPoint: 7, orderQuantity: 10, formula: 'summed-step-variance',
      periods: [{ period: '2026-01', coverDemand: 3.285421234, sigma: 2.123456789, safetyStock: 4, reorderPoint: 7 }],
    } as const
    const back = loadItem('RAKE-1', storeItem({ ...base, replenishment })) as Forecast
    const periods = [{ ...replenishment.periods[0], coverDemand: 3.285421, sigma: 2.123457 }]
    expect(back.replenishment).toEqual({ ...replenishment, leadTimeDemand: 3.285421, coverDemand: 3.285421, sigma: 2.123457, periods })
    expect(loadItem('RAKE-1', storeItem(base))).not.toHaveProperty('replenishment')
  })
})
