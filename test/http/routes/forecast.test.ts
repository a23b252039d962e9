import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import { build } from '../../../src/http/app.js'
import { InMemoryGatewayDouble, KEY_GARDEN, auth, testConfig } from '../gateway-double.js'

// Source: R `datasets::AirPassengers`, January 1949 to December 1951 (36 monthly
// values, printed with `Rscript -e 'cat(head(AirPassengers, 36))'`, R base-core).
const AIR_PASSENGERS_1949_1951 = [
  112, 118, 132, 129, 121, 135, 148, 148, 136, 119, 104, 118, 115, 126, 141, 135, 125, 149, 170, 170, 158, 133, 114,
  140, 145, 150, 178, 163, 172, 178, 199, 199, 184, 162, 146, 166,
]

describe('POST /v1/forecast (real engine)', () => {
  let app: FastifyInstance
  beforeAll(async () => {
    app = await build({ config: testConfig({ syncMaxSeries: 3 }), gateway: new InMemoryGatewayDouble() })
  })
  afterAll(() => app.close())

  const post = (payload: unknown) =>
    app.inject({ method: 'POST', url: '/v1/forecast', headers: auth(KEY_GARDEN), payload: payload as object })

  it('forecasts a 36-point monthly seasonal series 12 periods ahead with 80/95 bounds', async () => {
    const res = await post({
      horizon: 12,
      series: [{ sku: 'AIR-1949', demand: AIR_PASSENGERS_1949_1951, firstPeriod: '1949-01' }],
    })
    expect(res.statusCode).toBe(200)
    const { items } = res.json()
    expect(items).toHaveLength(1)
    const item = items[0]
    expect(item.sku).toBe('AIR-1949')
    expect(item.failure).toBeUndefined()
    expect(item.frequency).toBe('month')
    expect(item.forecast).toHaveLength(12)
    expect(item.forecast[0].period).toBe('1952-01')
    expect(item.forecast[11].period).toBe('1952-12')
    for (const p of item.forecast) {
      expect(p.intervals.map((i: { level: number }) => i.level)).toEqual([80, 95])
      const [i80, i95] = p.intervals
      expect(Number.isFinite(p.demand)).toBe(true)
      expect(i95.low).toBeLessThanOrEqual(i80.low)
      expect(i80.low).toBeLessThanOrEqual(p.demand)
      expect(p.demand).toBeLessThanOrEqual(i80.high)
      expect(i80.high).toBeLessThanOrEqual(i95.high)
    }
    // Summer peak of the data (July/August) stays above the November trough in the forecast.
    expect(item.forecast[6].demand).toBeGreaterThan(item.forecast[10].demand)
    expect(item.candidates.length).toBeGreaterThan(1)
  })

  it('takes a calendar date as the first period of a weekly series: its ISO week', async () => {
    // 2024-03-05 is a Tuesday of ISO week 2024-W10 (Monday 4 March); 30 weeks run to 2024-W39.
    const demand = Array.from({ length: 30 }, (_, t) => 20 + (t % 4))
    const res = await post({ horizon: 2, frequency: 'week', series: [{ sku: 'WEEKLY', firstPeriod: '2024-03-05', demand }] })
    expect(res.statusCode).toBe(200)
    expect(res.json().items[0].forecast.map((p: { period: string }) => p.period)).toEqual(['2024-W40', '2024-W41'])
  })

  it('returns a series the engine rejects as an item with failure, the others forecast', async () => {
    const res = await post({
      horizon: 3,
      series: [
        { sku: 'OK', demand: AIR_PASSENGERS_1949_1951 },
        { sku: 'NEG', demand: [5, -2, 7, 4] },
      ],
    })
    expect(res.statusCode).toBe(200)
    const [ok, bad] = res.json().items
    expect(ok.forecast).toHaveLength(3)
    expect(bad.sku).toBe('NEG')
    expect(bad.failure.code).toBe('negative-value')
    expect(typeof bad.failure.message).toBe('string')
  })

  it('adds replenishment figures when asked, and checks the lead time against the horizon like a run', async () => {
    const res = await post({
      horizon: 6,
      replenishment: { leadTimePeriods: 2, serviceLevel: 0.95 },
      series: [{ sku: 'AIR-1949', demand: AIR_PASSENGERS_1949_1951 }],
    })
    expect(res.statusCode).toBe(200)
    const item = res.json().items[0]
    expect(item.replenishment.leadTimePeriods).toBe(2)
    // Lead-time demand is the sum of the first two point forecasts (its documented definition).
    expect(item.replenishment.leadTimeDemand).toBeCloseTo(item.forecast[0].demand + item.forecast[1].demand, 6)

    const tooLong = await post({
      horizon: 3,
      replenishment: { leadTimePeriods: 4, serviceLevel: 0.95 },
      series: [{ sku: 'A', demand: [1, 2, 3, 4] }],
    })
    expect(tooLong.statusCode).toBe(400)
    expect(tooLong.json().errors[0].path).toBe('replenishment.leadTimePeriods')
  })

  it('refuses a callbackUrl: only runs call back', async () => {
    const res = await post({ horizon: 1, callbackUrl: 'https://erp.example/hook', series: [{ sku: 'A', demand: [1, 2] }] })
    expect(res.statusCode).toBe(400)
    expect(res.json().errors).toEqual([
      { path: 'callbackUrl', message: 'only runs call back; POST /v1/forecast answers in the response' },
    ])
  })

  it('answers 413 too-many-series above the synchronous limit', async () => {
    const series = Array.from({ length: 4 }, (_, i) => ({ sku: `S${i}`, demand: [1, 2, 3] }))
    const res = await post({ horizon: 1, series })
    expect(res.statusCode).toBe(413)
    expect(res.headers['content-type']).toBe('application/problem+json; charset=utf-8')
    expect(res.json()).toMatchInlineSnapshot(`
      {
        "detail": "POST /v1/forecast takes at most 3 series (got 4); submit a run with POST /v1/runs",
        "status": 413,
        "title": "Too many series for a synchronous forecast",
        "type": "https://almanac.example/problems/too-many-series",
      }
    `)
  })

  it('names every invalid field in a 400', async () => {
    const res = await post({
      horizon: 0,
      intervalLevels: [80, 120],
      series: [{ sku: 'A', demand: [1, 2] }, { sku: '', demand: [1, 'two', null] }],
    })
    expect(res.statusCode).toBe(400)
    expect(res.json()).toMatchInlineSnapshot(`
      {
        "detail": "The request body has 5 invalid fields",
        "errors": [
          {
            "message": "Too small: expected number to be >=1",
            "path": "horizon",
          },
          {
            "message": "Too big: expected number to be <100",
            "path": "intervalLevels[1]",
          },
          {
            "message": "Too small: expected string to have >=1 characters",
            "path": "series[1].sku",
          },
          {
            "message": "must not contain control characters or lone UTF-16 surrogates",
            "path": "series[1].sku",
          },
          {
            "message": "Invalid input: expected number, received string",
            "path": "series[1].demand[1]",
          },
        ],
        "status": 400,
        "title": "Validation failed",
        "type": "https://almanac.example/problems/validation-failed",
      }
    `)
  })
})
