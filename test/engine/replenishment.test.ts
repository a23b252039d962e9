import { describe, expect, it } from 'vitest'
import { readFileSync } from 'node:fs'
import { approxEqual } from '../../src/engine/numeric.js'
import {
  EngineInputError,
  computeReplenishment,
  oneStepRms,
  replenishmentFor,
} from '../../src/engine/index.js'

// Made by test/engine/fixtures/r-replenishment/make.R (base R stats::qnorm; R version inside the JSON).
const ref = JSON.parse(
  readFileSync(new URL('./fixtures/r-replenishment/replenishment.json', import.meta.url), 'utf8'),
) as {
  qnorm: { level: number[]; z: number[] }
  safetyStock: {
    residuals: number[]
    point: number[]
    leadTime: number
    serviceLevel: number
    rms: number
    sigma: number
    z: number
    safetyStock: number
    leadTimeDemand: number
    reorderPoint: number
  }
}

const summary = (r: readonly number[]) => {
  const m = r.reduce((a, b) => a + b, 0) / r.length
  const sd = Math.sqrt(r.reduce((a, b) => a + (b - m) ** 2, 0) / (r.length - 1))
  return { count: r.length, mean: m, sd }
}

describe('computeReplenishment: special cases', () => {
  it('rejects a lead time beyond the horizon, below 1 or fractional', () => {
    for (const leadTimePeriods of [0, 4, 1.5]) {
      expect(() => computeReplenishment([1, 2, 3], 1, { leadTimePeriods, serviceLevel: 0.95 })).toThrow(EngineInputError)
    }
    try {
      computeReplenishment([1, 2, 3], 1, { leadTimePeriods: 4, serviceLevel: 0.95 })
    } catch (err) {
      expect((err as EngineInputError).code).toBe('invalid-option')
      expect((err as EngineInputError).field).toBe('replenishment.leadTimePeriods')
    }
  })

  it('rejects service levels outside (0.5, 0.9999), and NaN', () => {
    for (const serviceLevel of [0.5, 0.4, 0.9999, 1, Number.NaN]) {
      expect(() => computeReplenishment([1, 2], 1, { leadTimePeriods: 1, serviceLevel })).toThrow(/serviceLevel/)
    }
  })

  it('gives only lead-time demand when the error spread is unknown', () => {
    const r = computeReplenishment([10, 20], null, { leadTimePeriods: 2, serviceLevel: 0.9 })
    expect(r.leadTimeDemand).toBe(30)
    expect(r.sigma).toBeNull()
    expect(r.safetyStock).toBeNull()
    expect(r.reorderPoint).toBeNull()
  })

  it('a perfect fit (zero residuals) needs no safety stock', () => {
    const r = computeReplenishment([5, 5, 5], oneStepRms({ count: 12, mean: 0, sd: 0 }), { leadTimePeriods: 3, serviceLevel: 0.99 })
    expect(r).toMatchObject({ leadTimeDemand: 15, sigma: 0, safetyStock: 0, reorderPoint: 15 })
  })

  it('all-zero forecasts give zero lead-time demand, and NaN never escapes', () => {
    const r = computeReplenishment([0, 0, 0], 2, { leadTimePeriods: 2, serviceLevel: 0.95 })
    expect(r.leadTimeDemand).toBe(0)
    expect(Number.isFinite(r.reorderPoint!)).toBe(true)
    expect(() => computeReplenishment([Number.NaN, 1], 1, { leadTimePeriods: 1, serviceLevel: 0.9 })).toThrow(EngineInputError)
  })

  it('leaves the spread unknown when the engine gave no intervals (constant history)', () => {
    const r = replenishmentFor(
      { forecast: [{ demand: 10 }, { demand: 10 }], residuals: { count: 23, mean: 0, sd: 0 }, intervalMethod: 'none' },
      { leadTimePeriods: 2, serviceLevel: 0.95 },
    )
    expect(r).toMatchObject({ leadTimeDemand: 20, sigma: null, safetyStock: null, reorderPoint: null })
  })

  it('oneStepRms needs two residuals', () => {
    expect(oneStepRms({ count: 1, mean: 3, sd: 0 })).toBeNull()
    expect(oneStepRms({ count: 0, mean: 0, sd: 0 })).toBeNull()
  })
})

describe('z against R qnorm', () => {
  // Source: base R stats::qnorm (fixture). Standard normal table values: 0.90 -> 1.2816,
  // 0.95 -> 1.6449, 0.975 -> 1.9600, 0.99 -> 2.3263 (four decimals).
  it.each(ref.qnorm.level.map((level, i) => [level, ref.qnorm.z[i]!]))('service level %s -> z %s', (level, z) => {
    const r = computeReplenishment([1], 1, { leadTimePeriods: 1, serviceLevel: level })
    // Tolerance 1e-14 relative: AS 241 on both sides, measured error rounded up.
    expect(approxEqual(r.z, z, 1e-14)).toBe(true)
  })

  it('matches the four-decimal table values', () => {
    const z = (serviceLevel: number) => computeReplenishment([1], 1, { leadTimePeriods: 1, serviceLevel }).z
    expect(z(0.9)).toBeCloseTo(1.2816, 4)
    expect(z(0.95)).toBeCloseTo(1.6449, 4)
    expect(z(0.975)).toBeCloseTo(1.96, 4)
    expect(z(0.99)).toBeCloseTo(2.3263, 4)
  })
})

describe('safety stock and reorder point', () => {
  // Hand-computed: residuals 4, -6, 3, -1, 5, -2, 0, -3 have squares summing to 100, so
  // sigma_1 = sqrt(100 / 8) = 3.5355; L = 3: sigma_L = 3.5355 * sqrt(3) = 6.1237;
  // 95 %: safety stock = 1.6449 * 6.1237 = 10.073; lead-time demand 120 + 125 + 130 = 375;
  // reorder point 385.07. The same numbers from base R are in the fixture.
  const c = ref.safetyStock
  const result = replenishmentFor(
    { forecast: c.point.map((demand) => ({ demand })), residuals: summary(c.residuals) },
    { leadTimePeriods: c.leadTime, serviceLevel: c.serviceLevel },
  )

  it('derives sigma_1 as the RMS of the one-step residuals', () => {
    expect(approxEqual(oneStepRms(summary(c.residuals))!, c.rms, 1e-12)).toBe(true)
    expect(oneStepRms(summary(c.residuals))).toBeCloseTo(3.5355, 4)
  })

  it('matches the hand-computed case', () => {
    expect(result.leadTimeDemand).toBe(375)
    expect(result.sigma).toBeCloseTo(6.1237, 4)
    expect(result.safetyStock).toBeCloseTo(10.073, 3)
    expect(result.reorderPoint).toBeCloseTo(385.073, 3)
    expect(result.formula).toBe('sigma1-sqrt-lead-time')
  })

  it('matches base R to 1e-12 relative', () => {
    expect(approxEqual(result.sigma!, c.sigma, 1e-12)).toBe(true)
    expect(approxEqual(result.safetyStock!, c.safetyStock, 1e-12)).toBe(true)
    expect(approxEqual(result.reorderPoint!, c.reorderPoint, 1e-12)).toBe(true)
  })

  it('grows with the square root of the lead time and with the service level', () => {
    const at = (leadTimePeriods: number, serviceLevel: number) =>
      computeReplenishment([10, 10, 10, 10], 2, { leadTimePeriods, serviceLevel }).safetyStock!
    expect(at(4, 0.95) / at(1, 0.95)).toBeCloseTo(2, 12)
    expect(at(2, 0.99)).toBeGreaterThan(at(2, 0.95))
  })
})
