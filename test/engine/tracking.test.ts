import { describe, expect, it } from 'vitest'
import { readFileSync } from 'node:fs'
import { approxEqual } from '../../src/engine/numeric.js'
import { EngineInputError, summariseAccuracy } from '../../src/engine/index.js'

// Made by test/engine/fixtures/r-replenishment/make.R (base R arithmetic; R version inside the JSON).
const ref = JSON.parse(
  readFileSync(new URL('./fixtures/r-replenishment/replenishment.json', import.meta.url), 'utf8'),
).tracking as { actual: number[]; forecast: number[]; mae: number; bias: number; mape: number; trackingSignal: number }

const periods = (actual: number[], forecast: number[]) =>
  actual.map((a, i) => ({ period: `2025-${String(i + 1).padStart(2, '0')}`, actualDemand: a, forecastDemand: forecast[i]! }))

describe('summariseAccuracy', () => {
  it('is empty without scored periods', () => {
    expect(summariseAccuracy([])).toEqual({
      scoredPeriods: 0, mae: null, bias: null, mape: null, trackingSignal: null, flagged: false, trackingLimit: 4,
    })
  })

  it('perfect forecasts: zero errors, tracking signal 0, MAPE 0', () => {
    const s = summariseAccuracy(periods([5, 6, 7, 8, 9], [5, 6, 7, 8, 9]))
    expect(s).toMatchObject({ scoredPeriods: 5, mae: 0, bias: 0, mape: 0, trackingSignal: 0, flagged: false })
  })

  it('all-zero actuals leave MAPE undefined (null), never NaN', () => {
    const s = summariseAccuracy(periods([0, 0, 0], [1, 2, 0]))
    expect(s.mape).toBeNull()
    expect(s.mae).toBe(1)
    expect(s.bias).toBe(-1)
    expect(s.trackingSignal).toBe(-3)
  })

  it('rejects non-finite input', () => {
    expect(() => summariseAccuracy(periods([1, Number.NaN], [1, 1]))).toThrow(EngineInputError)
  })

  // Hand-computed: deviations (actual - forecast) 5, -2, 10, 4, -3, 10; sum 24; sum of |e| 34;
  // MAE = 34 / 6 = 5.6667; bias = 24 / 6 = 4 (positive: under-forecast);
  // TS = 24 / 5.6667 = 4.2353 > 4, flagged. MAPE skips the zero actual:
  // 100 * (5/100 + 2/96 + 10/110 + 4/104 + 10/120) / 5 = 5.6707. Base R agrees (fixture).
  it('matches the hand-computed tracking signal', () => {
    const s = summariseAccuracy(periods(ref.actual, ref.forecast))
    expect(s.scoredPeriods).toBe(6)
    expect(s.mae).toBeCloseTo(5.6667, 4)
    expect(s.bias).toBe(4)
    expect(s.trackingSignal).toBeCloseTo(4.2353, 4)
    expect(s.mape).toBeCloseTo(5.6707, 4)
    expect(s.flagged).toBe(true)
    expect(approxEqual(s.trackingSignal!, ref.trackingSignal, 1e-12)).toBe(true)
    expect(approxEqual(s.mape!, ref.mape, 1e-12)).toBe(true)
  })

  it('never flags with fewer than minPeriods periods (|TS| <= n)', () => {
    const s = summariseAccuracy(periods([10, 10, 10], [1, 1, 1]))
    expect(s.trackingSignal).toBe(3)
    expect(summariseAccuracy(periods([10, 10, 10, 10, 10], [1, 1, 1, 1, 1])).flagged).toBe(true)
    expect(summariseAccuracy(periods([10, 10, 10, 10, 10], [1, 1, 1, 1, 1]), { trackingLimit: 6 }).flagged).toBe(false)
  })

  it('an unbiased forecast with alternating errors stays inside the limit', () => {
    const s = summariseAccuracy(periods([12, 8, 12, 8, 12, 8, 12, 8], [10, 10, 10, 10, 10, 10, 10, 10]))
    expect(s.trackingSignal).toBe(0)
    expect(s.flagged).toBe(false)
  })
})
