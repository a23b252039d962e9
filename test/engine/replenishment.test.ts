import { describe, expect, it } from 'vitest'
import { readFileSync } from 'node:fs'
import { approxEqual } from '../../src/engine/numeric.js'
import { EngineInputError, computeReplenishment, forecastSeries, replenishmentFor } from '../../src/engine/index.js'

// Made by test/engine/fixtures/r-replenishment/make.R (base R stats::qnorm and arithmetic; R version inside the JSON).
const ref = JSON.parse(readFileSync(new URL('./fixtures/r-replenishment/replenishment.json', import.meta.url), 'utf8')) as {
  qnorm: { level: number[]; z: number[] }
  summed: {
    point: number[]
    sd: number[]
    leadTime: number
    review: number
    leadTimeSd: number
    serviceLevel: number
    coverDemand: number
    sigma: number
    rawReorderPoint: number
    coverDemand2: number
    sigma2: number
  }
}

const points = (demand: readonly number[]) => demand.map((d, i) => ({ period: `2026-${String(i + 1).padStart(2, '0')}`, demand: d }))

describe('computeReplenishment: special cases', () => {
  it('rejects a protection interval beyond the horizon, a lead time of 0 and negative durations', () => {
    const bad: [number, number | undefined][] = [[0, undefined], [4, undefined], [2.5, 1], [-1, undefined], [1, -0.5]]
    for (const [leadTimePeriods, reviewPeriods] of bad) {
      const opts = { leadTimePeriods, serviceLevel: 0.95, ...(reviewPeriods === undefined ? {} : { reviewPeriods }) }
      expect(() => computeReplenishment(points([1, 2, 3]), [1, 1, 1], opts)).toThrow(EngineInputError)
    }
    try {
      computeReplenishment(points([1, 2, 3]), [1, 1, 1], { leadTimePeriods: 3.5, serviceLevel: 0.95 })
      expect.unreachable()
    } catch (err) {
      expect((err as EngineInputError).code).toBe('invalid-option')
      expect((err as EngineInputError).field).toBe('replenishment.leadTimePeriods')
    }
  })

  it('rejects service levels outside (0.5, 0.9999), and NaN; a pack size of 0 and a negative minimum order', () => {
    for (const serviceLevel of [0.5, 0.4, 0.9999, 1, Number.NaN]) {
      expect(() => computeReplenishment(points([1, 2]), [1, 1], { leadTimePeriods: 1, serviceLevel })).toThrow(/serviceLevel/)
    }
    expect(() => computeReplenishment(points([1]), [1], { leadTimePeriods: 1, serviceLevel: 0.9, packSize: 0 })).toThrow(/packSize/)
    expect(() => computeReplenishment(points([1]), [1], { leadTimePeriods: 1, serviceLevel: 0.9, minimumOrder: -1 })).toThrow(/minimumOrder/)
  })

  it('gives only demands and the order quantity when the error spread is unknown', () => {
    const r = computeReplenishment(points([10, 20]), null, { leadTimePeriods: 2, serviceLevel: 0.9 })
    expect(r).toMatchObject({ leadTimeDemand: 30, coverDemand: 30, sigma: null, safetyStock: null, reorderPoint: null, orderQuantity: 10 })
    const none = replenishmentFor({ forecast: points([10, 10]), stepSd: [0, 0], intervalMethod: 'none' }, { leadTimePeriods: 2, serviceLevel: 0.95 })
    expect(none).toMatchObject({ sigma: null, safetyStock: null })
  })

  it('a perfect fit with a fixed lead time needs no safety stock; NaN never escapes', () => {
    const r = computeReplenishment(points([5, 5, 5]), [0, 0, 0], { leadTimePeriods: 3, serviceLevel: 0.99 })
    expect(r).toMatchObject({ leadTimeDemand: 15, sigma: 0, safetyStock: 0, reorderPoint: 15 })
    const zero = computeReplenishment(points([0, 0, 0]), [2, 2, 2], { leadTimePeriods: 2, serviceLevel: 0.95 })
    expect(zero.coverDemand).toBe(0)
    expect(Number.isFinite(zero.reorderPoint!)).toBe(true)
    expect(() => computeReplenishment(points([Number.NaN, 1]), [1, 1], { leadTimePeriods: 1, serviceLevel: 0.9 })).toThrow(EngineInputError)
  })
})

describe('z against R qnorm', () => {
  // Source: base R stats::qnorm (fixture). Standard normal table values: 0.90 -> 1.2816,
  // 0.95 -> 1.6449, 0.975 -> 1.9600, 0.99 -> 2.3263 (four decimals).
  it.each(ref.qnorm.level.map((level, i) => [level, ref.qnorm.z[i]!]))('service level %s -> z %s', (level, z) => {
    const r = computeReplenishment(points([1]), [1], { leadTimePeriods: 1, serviceLevel: level })
    // Tolerance 1e-14 relative: AS 241 on both sides, measured error rounded up.
    expect(approxEqual(r.z, z, 1e-14)).toBe(true)
  })
})

describe('summed step variances with lead-time variability (Silver, Pyke & Peterson 1998, from memory)', () => {
  // sigma = sqrt(E[L] sigma_d^2 + d^2 sigma_L^2), with E[L] sigma_d^2 taken as the forecast's own step
  // variances summed over L + R. Worked by hand (the fixture has the same numbers from base R):
  // c = 2.5 + 1 = 3.5 periods, weights 1, 1, 1, 0.5.
  // coverDemand = 100 + 180 + 260 + 0.5 * 140 = 610; variances 100 + 144 + 196 + 0.5 * 256 = 568;
  // d = 610 / 3.5 = 174.2857; d^2 * 0.5^2 = 7591.84; sigma = sqrt(568 + 7591.84) = 90.343;
  // z(0.95) = 1.6449: z * sigma = 148.60 -> safety stock 149 (rounded up);
  // reorder point (order-up-to level) = ceil(610 + 148.60) = 759.
  const c = ref.summed
  const opts = { leadTimePeriods: c.leadTime, reviewPeriods: c.review, leadTimeSdPeriods: c.leadTimeSd, serviceLevel: c.serviceLevel }
  const r = computeReplenishment(points(c.point), c.sd, opts)

  it('matches the hand-computed case', () => {
    expect(r).toMatchObject({ leadTimeDemand: 100 + 180 + 0.5 * 260, coverDemand: 610, safetyStock: 149, reorderPoint: 759 })
    expect(r.sigma).toBeCloseTo(90.343, 3)
    expect(r.formula).toBe('summed-step-variance')
  })

  it('matches base R to 1e-12 relative, including the row for an order placed in period 2', () => {
    expect(approxEqual(r.sigma!, c.sigma, 1e-12)).toBe(true)
    expect(r.reorderPoint).toBe(Math.ceil(c.rawReorderPoint))
    // Rows for orders placed in periods 1..3: the interval (4 steps) fits three times in 6 periods.
    expect(r.periods.map((p) => p.period)).toEqual(['2026-01', '2026-02', '2026-03'])
    expect(r.periods[0]).toMatchObject({ coverDemand: 610, safetyStock: 149, reorderPoint: 759 })
    expect(r.periods[1]!.coverDemand).toBe(c.coverDemand2)
    expect(approxEqual(r.periods[1]!.sigma!, c.sigma2, 1e-12)).toBe(true)
  })

  it('reduces to the fixed-lead-time formula sqrt(L) * sigma_1 when every step has sd sigma_1 and sigma_L = 0', () => {
    // L = 4, sigma_1 = 2: sqrt(4 * 4) = 4; z(0.95) * 4 = 6.58 -> 7 units.
    const flat = computeReplenishment(points([10, 10, 10, 10]), [2, 2, 2, 2], { leadTimePeriods: 4, serviceLevel: 0.95 })
    expect(flat.sigma).toBeCloseTo(4, 12)
    expect(flat.safetyStock).toBe(7)
    expect(flat.reorderPoint).toBe(47)
  })

  it('rounds the order quantity up to the minimum order and whole packs', () => {
    // Demand over the review period (1 period) = 100; minimum 120 -> 120; packs of 24 -> 5 packs = 120; of 50 -> 150.
    expect(computeReplenishment(points(c.point), c.sd, { ...opts, minimumOrder: 120, packSize: 24 }).orderQuantity).toBe(120)
    expect(computeReplenishment(points(c.point), c.sd, { ...opts, minimumOrder: 120, packSize: 50 }).orderQuantity).toBe(150)
    // Without a minimum: 100 in packs of 12 -> 9 packs = 108.
    expect(computeReplenishment(points(c.point), c.sd, { ...opts, packSize: 12 }).orderQuantity).toBe(108)
  })

  it('differs by season for a seasonal item: the peak month carries the larger reorder point', () => {
    // A strongly seasonal history (garden hose: summer peak), two years, monthly.
    const season = [20, 25, 60, 110, 180, 240, 250, 190, 100, 50, 25, 20]
    const demand = [...season, ...season.map((v) => v * 1.1)]
    const result = forecastSeries({ demand, frequency: 'month', firstPeriod: '2024-01', horizon: 12 })
    const fig = replenishmentFor(result, { leadTimePeriods: 1, serviceLevel: 0.95 })
    const byPeriod = new Map(fig.periods.map((p) => [p.period, p.reorderPoint!]))
    expect(byPeriod.get('2026-07')!).toBeGreaterThan(byPeriod.get('2026-01')!)
  })
})
