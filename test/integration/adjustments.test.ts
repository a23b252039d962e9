import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import type { RunMachinery } from '../../src/queue/gateway.js'
import { planningDeps, startService, type TestService } from '../helpers/service.js'
import { waitFor } from '../queue/fixtures.js'

// Adjustments end to end: stored history -> run -> a planner adjusts periods -> the SKU
// forecast serves statistical and final values -> actuals arrive -> value added is scored
// and the passed adjustments expire. Service behaviour; the numbers are worked by hand.
let service: TestService
let app: FastifyInstance
let gateway: RunMachinery
const hookErrors: unknown[] = []

beforeAll(async () => {
  service = await startService('adjustments', {
    config: { chunkSize: 5, workerConcurrency: 1 },
    erp: true,
    appDeps: (ctx) => planningDeps(ctx, (err) => hookErrors.push(err)),
  })
  ;({ app, gateway } = service)
})

afterAll(() => service?.close())

const put = (sku: string, demand: (number | null)[]) =>
  app.inject({ method: 'PUT', url: `/v1/skus/${sku}/history`, payload: { frequency: 'month', firstPeriod: '2024-01', demand } })
const flat = (level: number) => Array.from({ length: 24 }, () => level)
const adjust = (sku: string, payload: object) => app.inject({ method: 'POST', url: `/v1/skus/${sku}/adjustments`, payload })
const trail = async (sku: string, query = '') => (await app.inject({ url: `/v1/skus/${sku}/adjustments/trail${query}` })).json()

describe('adjustments', { timeout: 120_000 }, () => {
  beforeAll(async () => {
    // A constant history forecasts its level: 100 for 2026-01 .. 2026-06.
    expect((await put('HOSE-25M', flat(100))).statusCode).toBe(201)
    const res = await app.inject({ method: 'POST', url: '/v1/runs', payload: { horizon: 6, scope: { skus: ['HOSE-25M'] } } })
    expect(res.statusCode).toBe(202)
    await waitFor(async () => {
      const r = await gateway.get('default', res.json().id)
      return r?.status === 'succeeded' ? r : undefined
    }, 60_000, 'the run')
  })

  it('a forecast without adjustments serves finalDemand = demand', async () => {
    const f = (await app.inject({ url: '/v1/skus/HOSE-25M/forecast' })).json()
    expect(f.forecast.map((p: { demand: number; finalDemand: number; adjustment: unknown }) => [p.demand, p.finalDemand, p.adjustment])).toEqual(
      Array.from({ length: 6 }, () => [100, 100, null]),
    )
  })

  it('refuses bad bodies naming the field, and periods it cannot adjust, storing nothing', async () => {
    const both = await adjust('HOSE-25M', { periods: ['2026-01'], setDemand: 1, changePercent: 2, reason: 'x', author: 'dana' })
    expect(both.statusCode).toBe(400)
    expect(both.json().errors).toEqual([{ path: 'changePercent', message: 'give setDemand or changePercent, not both' }])
    const noReason = await adjust('HOSE-25M', { periods: ['2026-01'], setDemand: 1, author: 'dana' })
    expect(noReason.statusCode).toBe(400)
    expect(noReason.json().errors.map((e: { path: string }) => e.path)).toEqual(['reason'])
    const outside = await adjust('HOSE-25M', { periods: ['2026-02', '2027-01'], setDemand: 1, reason: 'x', author: 'dana' })
    expect(outside.statusCode).toBe(422)
    expect(outside.json()).toMatchInlineSnapshot(`
      {
        "detail": "1 of the periods cannot be adjusted",
        "errors": [
          {
            "message": "is not a period of the SKU's current forecast (2026-01 to 2026-06)",
            "path": "periods[1]",
          },
        ],
        "status": 422,
        "title": "Period not adjustable",
        "type": "https://almanac.example/problems/period-not-adjustable",
      }
    `)
    expect((await app.inject({ url: '/v1/skus/NO-SUCH/adjustments/2026-01', method: 'PUT', payload: { setDemand: 1, reason: 'x', author: 'dana' } })).statusCode).toBe(404)
    expect((await app.inject({ url: '/v1/skus/HOSE-25M/adjustments' })).json().items).toEqual([])
    expect((await trail('HOSE-25M')).items).toEqual([])
  })

  it('adjusts two periods by a percentage; the forecast serves statistical, adjustment and final', async () => {
    const res = await adjust('HOSE-25M', { periods: ['2026-01', '2026-02'], changePercent: 20, reason: 'spring promotion', author: 'dana' })
    expect(res.statusCode).toBe(200)
    expect(res.json().items.map((a: { period: string; statisticalDemand: number; finalDemand: number }) => [a.period, a.statisticalDemand, a.finalDemand])).toEqual([
      ['2026-01', 100, 120],
      ['2026-02', 100, 120],
    ])
    const f = (await app.inject({ url: '/v1/skus/HOSE-25M/forecast' })).json()
    expect(f.forecast[0]).toMatchObject({ period: '2026-01', demand: 100, finalDemand: 120, adjustment: { changePercent: 20, reason: 'spring promotion', author: 'dana' } })
    expect(f.forecast[2]).toMatchObject({ period: '2026-03', demand: 100, finalDemand: 100, adjustment: null })
    const t = await trail('HOSE-25M')
    expect(t.items.map((e: { period: string }) => e.period)).toEqual(['2026-02', '2026-01'])
    expect(t.items[0]).toMatchObject({
      action: 'set', author: 'dana', reason: 'spring promotion', before: null, after: { changePercent: 20 },
      statisticalDemand: 100, finalDemandBefore: 100, finalDemandAfter: 120,
    })
  })

  it('PUT is idempotent: 201, then 200 with no new trail entry; a change is recorded old -> new', async () => {
    const body = { setDemand: 90, reason: 'customer lost', author: 'eli' }
    const first = await app.inject({ method: 'PUT', url: '/v1/skus/HOSE-25M/adjustments/2026-03', payload: body })
    expect(first.statusCode).toBe(201)
    expect(first.json()).toMatchObject({ period: '2026-03', setDemand: 90, statisticalDemand: 100, finalDemand: 90, author: 'eli' })
    const again = await app.inject({ method: 'PUT', url: '/v1/skus/HOSE-25M/adjustments/2026-03', payload: body })
    expect(again.statusCode).toBe(200)
    expect((await trail('HOSE-25M')).items).toHaveLength(3)
    const changed = await app.inject({ method: 'PUT', url: '/v1/skus/HOSE-25M/adjustments/2026-03', payload: { ...body, setDemand: 70 } })
    expect(changed.statusCode).toBe(200)
    expect((await trail('HOSE-25M')).items[0]).toMatchObject({
      period: '2026-03', before: { setDemand: 90 }, after: { setDemand: 70 }, finalDemandBefore: 90, finalDemandAfter: 70,
    })
  })

  it('DELETE removes once and is idempotent; the trail pages newest first', async () => {
    const url = '/v1/skus/HOSE-25M/adjustments/2026-03?author=eli&reason=order%20restored'
    expect((await app.inject({ method: 'DELETE', url })).statusCode).toBe(204)
    expect((await app.inject({ method: 'DELETE', url })).statusCode).toBe(204)
    expect((await app.inject({ method: 'DELETE', url: '/v1/skus/HOSE-25M/adjustments/2026-03' })).json().errors).toEqual([
      { path: 'author', message: 'Invalid input: expected string, received undefined' },
    ])
    const page1 = await trail('HOSE-25M', '?limit=3')
    expect(page1.items.map((e: { action: string; period: string }) => `${e.action} ${e.period}`)).toEqual(['removed 2026-03', 'set 2026-03', 'set 2026-03'])
    expect(page1.items[0]).toMatchObject({ author: 'eli', reason: 'order restored', before: { setDemand: 70 }, after: null, finalDemandAfter: 100 })
    const page2 = await trail('HOSE-25M', `?limit=3&cursor=${page1.nextCursor}`)
    expect(page2.items.map((e: { action: string; period: string }) => `${e.action} ${e.period}`)).toEqual(['set 2026-02', 'set 2026-01'])
    expect(page2.nextCursor).toBeNull()
    expect((await app.inject({ url: '/v1/skus/HOSE-25M/adjustments' })).json().items.map((a: { period: string }) => a.period)).toEqual(['2026-01', '2026-02'])
  })

  // Actuals 125 and 110 for 2026-01 and 2026-02; statistical 100, final 120, naive 100 (2025-12).
  //   statistical |err| 25, 10 -> MAE 17.5; final |err| 5, 10 -> MAE 7.5; naive = statistical -> 17.5.
  it('actuals score value added and expire the passed adjustments', async () => {
    expect((await put('HOSE-25M', [...flat(100), 125, 110])).statusCode).toBe(200)
    expect(hookErrors).toEqual([])
    const va = (await app.inject({ url: '/v1/skus/HOSE-25M/value-added' })).json()
    expect(va).toMatchObject({
      sku: 'HOSE-25M',
      scoredPeriods: 2,
      adjustedPeriods: 2,
      mae: { statistical: 17.5, final: 7.5, naive: 17.5 },
      valueAdded: { adjustments: 10, statistical: 0, final: 10 },
      adjustmentsBeatStatistical: true,
      statisticalBeatsNaive: false,
      finalBeatsNaive: true,
    })
    expect(va.byAuthor.map((b: { author: string; scoredPeriods: number }) => [b.author, b.scoredPeriods])).toEqual([['dana', 2]])
    expect((await app.inject({ url: '/v1/skus/HOSE-25M/adjustments' })).json().items).toEqual([])
    const t = await trail('HOSE-25M', '?limit=2')
    expect(t.items.map((e: { action: string }) => e.action)).toEqual(['expired', 'expired'])
    expect(t.items[0]).toMatchObject({ author: 'dana', before: { changePercent: 20 }, after: null })
    // A passed period can no longer be adjusted.
    const late = await adjust('HOSE-25M', { periods: ['2026-01'], setDemand: 1, reason: 'x', author: 'dana' })
    expect(late.statusCode).toBe(422)
    expect(late.json().errors).toEqual([{ path: 'periods[0]', message: "has passed: the SKU's history already contains it" }])
    // The same upload again changes nothing; a corrected actual replaces only the actual.
    await put('HOSE-25M', [...flat(100), 125, 110])
    expect((await app.inject({ url: '/v1/skus/HOSE-25M/value-added' })).json().scoredPeriods).toBe(2)
    await put('HOSE-25M', [...flat(100), 125, 130])
    const corrected = (await app.inject({ url: '/v1/skus/HOSE-25M/value-added' })).json()
    // 2026-02 now: statistical |30|, final |10| -> MAE statistical 27.5, final 7.5.
    expect(corrected.mae).toEqual({ statistical: 27.5, final: 7.5, naive: 27.5 })
  })

  it('404 for value added before any period is scored', async () => {
    expect((await app.inject({ url: '/v1/skus/NO-SUCH/value-added' })).statusCode).toBe(404)
  })
})
