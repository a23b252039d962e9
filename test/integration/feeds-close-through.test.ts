import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import { AccuracyTrackingHistoryStore } from '../../src/storage/erp/accuracy-hook.js'
import { startService, type TestService } from '../helpers/service.js'
import { waitFor } from '../queue/fixtures.js'

/**
 * Issue 13: the feed itself moves the closed-through period (`closeThrough` on an upload), with
 * the same effect as PUT /v1/closed-periods/{frequency}. Constant histories of the invented
 * distributor forecast their level whatever model is chosen; the numbers are worked by hand.
 */
let service: TestService
let app: FastifyInstance
const hookErrors: unknown[] = []

beforeAll(async () => {
  service = await startService('feeds-close-through', {
    config: { chunkSize: 5, workerConcurrency: 1 },
    erp: true,
    appDeps: (ctx) => ({
      histories: new AccuracyTrackingHistoryStore(ctx.redis, { prefix: ctx.prefix }, ctx.erp!.services.accuracy, (err) => hookErrors.push(err)),
    }),
  })
  app = service.app
}, 60_000)

afterAll(() => service?.close())

const flat = (level: number, n = 24) => Array.from({ length: n }, () => level)
const upload = (csv: string, query: string) =>
  app.inject({ method: 'POST', url: `/v1/history?frequency=month&${query}`, headers: { 'content-type': 'text/csv' }, payload: csv })
const history = async (sku: string) => (await app.inject({ url: `/v1/skus/${sku}/history` })).json()

describe('an upload that closes the month', { timeout: 120_000 }, () => {
  beforeAll(async () => {
    // Gloves sell 40 a month through 2026-01; a boiler spare part (20 a month) last sold in 2025-12.
    const put = (sku: string, demand: number[]) =>
      app.inject({ method: 'PUT', url: `/v1/skus/${sku}/history`, payload: { frequency: 'month', firstPeriod: sku === 'GLOVE-L' ? '2024-02' : '2024-01', demand } })
    expect((await put('GLOVE-L', flat(40))).statusCode).toBe(201)
    expect((await put('BOILER-VALVE', flat(20))).statusCode).toBe(201)
    const res = await app.inject({ method: 'POST', url: '/v1/runs', payload: { horizon: 3, scope: { all: true } } })
    expect(res.statusCode).toBe(202)
    await waitFor(async () => {
      const r = await service.gateway.get('default', res.json().id)
      return r?.status === 'succeeded' ? r : undefined
    }, 60_000, 'the published run')
  })

  it('refuses a closeThrough that is not a period of the frequency, storing nothing', async () => {
    const res = await upload('sku,period,demand\nGLOVE-L,2026-02,45\n', 'closeThrough=2026-W07')
    expect(res.statusCode).toBe(400)
    expect(res.json().errors.map((e: { path: string }) => e.path)).toEqual(['closeThrough'])
    expect((await history('GLOVE-L')).lastPeriod).toBe('2026-01')
  })

  it('stores the file, then closes through the period: zero-demand SKUs carried forward and scored', async () => {
    const res = await upload('sku,period,demand\nGLOVE-L,2026-02,45\n', 'mode=overwrite&closeThrough=2026-02')
    expect(res.statusCode).toBe(200)
    expect(res.json()).toMatchObject({
      rows: { accepted: 1, rejected: 0 },
      skus: { updated: 1 },
      closing: { frequency: 'month', closedThrough: '2026-02', previous: null, outcome: 'moved', checkedSkus: 2, advancedSkus: 1 },
    })
    expect(hookErrors).toEqual([])
    expect((await app.inject({ url: '/v1/closed-periods' })).json()).toEqual({ closedThrough: { month: '2026-02' } })
    // The spare part sold nothing in 2026-01 and 2026-02: carried forward with zeros.
    const valve = await history('BOILER-VALVE')
    expect(valve.lastPeriod).toBe('2026-02')
    expect(valve.demand.slice(-2)).toEqual([0, 0])
    // Both zeros are scored against the forecast of 20: deviation 0 - 20 each, so MAE 20 and bias -20.
    const scored = (await app.inject({ url: '/v1/skus/BOILER-VALVE/accuracy' })).json()
    expect(scored.periods.map((p: { period: string; forecastDemand: number; actualDemand: number }) => [p.period, p.forecastDemand, p.actualDemand])).toEqual([
      ['2026-01', 20, 0],
      ['2026-02', 20, 0],
    ])
    expect(scored).toMatchObject({ mae: 20, bias: -20 })
    // The gloves' 45 against a forecast of 40 in 2026-02.
    const gloves = (await app.inject({ url: '/v1/skus/GLOVE-L/accuracy' })).json()
    expect(gloves.periods.map((p: { period: string; deviation: number }) => [p.period, p.deviation])).toEqual([['2026-02', 5]])
  })

  it('refuses closing backwards with 409 period-closed before storing anything of the file', async () => {
    const res = await upload('sku,period,demand\nGLOVE-L,2026-02,99\n', 'mode=overwrite&closeThrough=2026-01')
    expect(res.statusCode).toBe(409)
    expect(res.json()).toMatchObject({ type: 'https://almanac.example/problems/period-closed' })
    expect((await history('GLOVE-L')).demand.at(-1)).toBe(45)
    expect((await app.inject({ url: '/v1/closed-periods' })).json()).toEqual({ closedThrough: { month: '2026-02' } })
  })
})
