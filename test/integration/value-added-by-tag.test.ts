import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import { planningDeps, startService, type TestService } from '../helpers/service.js'
import { waitFor } from '../queue/fixtures.js'

// Forecast value added pooled over a tag and per planner (issue 15): two garden SKUs adjusted by two
// planners, one heating SKU left out by the tag. Constant histories forecast their level whatever model
// is chosen, so every number below is worked by hand. Invented data of the regional distributor.
let service: TestService
let app: FastifyInstance
const hookErrors: unknown[] = []

beforeAll(async () => {
  service = await startService('value-added-by-tag', {
    config: { chunkSize: 5, workerConcurrency: 1 },
    erp: true,
    appDeps: (ctx) => planningDeps(ctx, (err) => hookErrors.push(err)),
  })
  app = service.app
})

afterAll(() => service?.close())

const flat = (level: number) => Array.from({ length: 24 }, () => level)
const put = (sku: string, demand: number[], tags: string[]) =>
  app.inject({ method: 'PUT', url: `/v1/skus/${sku}/history`, payload: { frequency: 'month', firstPeriod: '2024-01', demand, tags } })
const adjust = (sku: string, change: object, author: string) =>
  app.inject({ method: 'POST', url: `/v1/skus/${sku}/adjustments`, payload: { periods: ['2026-01'], ...change, reason: 'customer order known', author } })

describe('forecast value added by tag', { timeout: 120_000 }, () => {
  beforeAll(async () => {
    expect((await put('RAKE-12', flat(100), ['category:garden'])).statusCode).toBe(201)
    expect((await put('SPADE-3', flat(50), ['category:garden'])).statusCode).toBe(201)
    expect((await put('STOVE-9', flat(80), ['category:heating'])).statusCode).toBe(201)
    const res = await app.inject({ method: 'POST', url: '/v1/runs', payload: { horizon: 3, scope: { all: true } } })
    expect(res.statusCode).toBe(202)
    await waitFor(async () => {
      const r = await service.gateway.get('default', res.json().id)
      return r?.status === 'succeeded' ? r : undefined
    }, 60_000, 'the run')
    // dana raises RAKE-12 by 20% (final 120); eli sets SPADE-3 to 40; STOVE-9 keeps its forecast.
    expect((await adjust('RAKE-12', { changePercent: 20 }, 'dana')).statusCode).toBe(200)
    expect((await adjust('SPADE-3', { setDemand: 40 }, 'eli')).statusCode).toBe(200)
    // The actuals of 2026-01 arrive: 125, 60 and 80.
    expect((await put('RAKE-12', [...flat(100), 125], ['category:garden'])).statusCode).toBe(200)
    expect((await put('SPADE-3', [...flat(50), 60], ['category:garden'])).statusCode).toBe(200)
    expect((await put('STOVE-9', [...flat(80), 80], ['category:heating'])).statusCode).toBe(200)
    expect(hookErrors).toEqual([])
  })

  // RAKE-12: statistical 100, final 120, naive 100, actual 125 -> |err| 25, 5, 25.
  // SPADE-3: statistical 50, final 40, naive 50, actual 60   -> |err| 10, 20, 10.
  // Pooled: MAE statistical (25 + 10) / 2 = 17.5, final (5 + 20) / 2 = 12.5, naive 17.5.
  it('pools every scored period of the tag and splits the adjusted ones by planner', async () => {
    const res = await app.inject({ url: '/v1/value-added/by-tag?tag=category:garden' })
    expect(res.statusCode).toBe(200)
    expect(res.json()).toMatchObject({
      tag: 'category:garden',
      skus: 2,
      scoredPeriods: 2,
      adjustedPeriods: 2,
      mae: { statistical: 17.5, final: 12.5, naive: 17.5 },
      valueAdded: { adjustments: 5, statistical: 0, final: 5 },
      adjustmentsBeatStatistical: true,
      statisticalBeatsNaive: false,
      finalBeatsNaive: true,
    })
    // dana: 25 -> 5 (+20); eli: 10 -> 20 (-10).
    const byAuthor = res.json().byAuthor.map((a: { author: string; valueAdded: { adjustments: number } }) => [a.author, a.valueAdded.adjustments])
    expect(byAuthor).toEqual([
      ['dana', 20],
      ['eli', -10],
    ])
  })

  it('leaves other tags out, and answers a tag with nothing scored with empty figures', async () => {
    const heating = (await app.inject({ url: '/v1/value-added/by-tag?tag=category:heating' })).json()
    expect(heating).toMatchObject({ skus: 1, scoredPeriods: 1, adjustedPeriods: 0, mae: { statistical: 0, final: 0, naive: 0 }, byAuthor: [] })
    const none = (await app.inject({ url: '/v1/value-added/by-tag?tag=category:workwear' })).json()
    expect(none).toMatchObject({ skus: 0, scoredPeriods: 0, mae: { statistical: null, final: null, naive: null }, adjustmentsBeatStatistical: null })
  })

  it('refuses a malformed tag naming the field', async () => {
    const res = await app.inject({ url: '/v1/value-added/by-tag?tag=no%20spaces' })
    expect(res.statusCode).toBe(400)
    expect(res.json().errors.map((e: { path: string }) => e.path)).toEqual(['tag'])
  })
})
