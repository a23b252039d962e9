import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { EngineInputError } from '../../src/engine/errors.js'
import { averageMetrics, computeMetrics, intervalMetrics, maseScale } from '../../src/engine/metrics.js'
import { approxEqual } from '../../src/engine/numeric.js'
import { METRIC_NAMES } from '../../src/engine/types.js'

// Source: base R 4.2.2 on datasets::AirPassengers (train 1949-1959, test 1960), formulas in make.R
// beside the JSON; MASE as Hyndman & Koehler (2006), scale = in-sample mean |y[t] - y[t-lag]|.
const air = JSON.parse(readFileSync(new URL('./fixtures/r-front/front.json', import.meta.url), 'utf8')).airPassengers as {
  train: number[]
  test: number[]
  seasonalNaive: Record<string, number> & { forecast: number[] }
  naive: Record<string, number> & { forecast: number[] }
}

describe('computeMetrics: special cases', () => {
  it('rejects empty or mismatched input', () => {
    expect(() => computeMetrics([], [], [1, 2], 1)).toThrow(EngineInputError)
    expect(() => computeMetrics([1, 2], [1], [1, 2], 1)).toThrow(EngineInputError)
  })

  it('is zero for a perfect forecast (MAPE/MASE/WAPE defined)', () => {
    const m = computeMetrics([1, 2, 3], [1, 2, 3], [1, 3, 2], 1)
    for (const name of METRIC_NAMES) expect(m[name]).toBe(0)
  })

  it('gives null MAPE and WAPE when every actual is zero, and counts 0/0 SMAPE terms as 0', () => {
    const m = computeMetrics([0, 0], [0, 2], [1, 2], 1)
    expect(m.mape).toBeNull()
    expect(m.wape).toBeNull()
    expect(m.smape).toBe(100) // terms 0 and 200
    expect(m.mae).toBe(1)
  })

  it('gives null MASE when the in-sample scale is zero or undefined', () => {
    expect(computeMetrics([1], [2], [5, 5, 5], 1).mase).toBeNull()
    expect(computeMetrics([1], [2], [5], 1).mase).toBeNull()
  })

  it('never returns NaN or Infinity, even on overflow', () => {
    const m = computeMetrics([1e308, -1e308], [-1e308, 1e308], [0, 1e308], 1)
    for (const name of METRIC_NAMES) {
      const v = m[name]
      expect(v === null || Number.isFinite(v)).toBe(true)
    }
  })
})

describe('computeMetrics: hand-checked', () => {
  // actual [10, 20, 0, 40], forecast [12, 15, 1, 40]: errors -2, 5, -1, 0.
  const m = computeMetrics([10, 20, 0, 40], [12, 15, 1, 40], [10, 14, 12, 18], 1)
  it('mae, rmse, wape', () => {
    expect(m.mae).toBe(2) // (2 + 5 + 1 + 0) / 4
    expect(approxEqual(m.rmse!, Math.sqrt(30 / 4), 1e-15)).toBe(true) // (4 + 25 + 1 + 0) / 4
    expect(approxEqual(m.wape!, (100 * 8) / 70, 1e-15)).toBe(true) // in percent, like mape
  })
  it('mape skips the zero actual', () => {
    expect(approxEqual(m.mape!, (100 * (0.2 + 0.25 + 0)) / 3, 1e-15)).toBe(true)
  })
  it('smape in 0..200', () => {
    const expected = (100 * (4 / 22 + 10 / 35 + 2 / 1 + 0)) / 4
    expect(approxEqual(m.smape!, expected, 1e-15)).toBe(true)
  })
  it('mase scales by the lag-1 in-sample mean absolute difference', () => {
    // in-sample diffs |4|, |-2|, |6| -> scale 4; mae 2 -> 0.5
    expect(m.mase).toBe(0.5)
  })
})

describe('maseScale', () => {
  it('uses lag m when there is more than one season, else lag 1', () => {
    expect(maseScale([1, 2, 3, 5, 6, 7], 3)).toBe(4) // |5-1|, |6-2|, |7-3|
    expect(maseScale([1, 2, 4], 3)).toBe(1.5) // too short for lag 3: |1|, |2|
    expect(maseScale([1, 2, 4], 1)).toBe(1.5)
  })
})

describe('computeMetrics against R on AirPassengers', () => {
  // Tolerance 1e-12 relative: same formulas, different summation order.
  for (const [name, ref, lag] of [
    ['seasonal naive', air.seasonalNaive, 12],
    ['naive', air.naive, 1],
  ] as const) {
    it(`${name} forecast of 1960`, () => {
      const m = computeMetrics(air.test, ref.forecast, air.train, lag)
      for (const metric of METRIC_NAMES) {
        expect(approxEqual(m[metric]!, ref[metric]!, 1e-12), `${metric}: ${m[metric]} vs ${ref[metric]}`).toBe(true)
      }
    })
  }
})

describe('averageMetrics', () => {
  it('averages each metric over the sets where it is defined', () => {
    const a = computeMetrics([0, 0], [1, 1], [1, 2], 1) // mape null
    const b = computeMetrics([2, 2], [1, 1], [1, 2], 1) // mape 50
    const avg = averageMetrics([a, b])
    expect(avg.mae).toBe(1)
    expect(avg.mape).toBe(50)
    expect(averageMetrics([a]).mape).toBeNull()
  })
})

describe('intervalMetrics', () => {
  it('is null without a spread', () => {
    expect(intervalMetrics([1, 2], [1, 2], null, [1, 2, 3], 1)).toEqual({ msis: null, pinball: null })
  })
  // Hand-checked: y = 10, f = 10, sd = 1: the 95% interval 10 -/+ 1.959964 holds y, width 3.919928;
  // scale of [0, 1, 2] at lag 1 is 1. Pinball at the median is 0; at tau = 0.9, q = 11.281552,
  // loss (q - y)(1 - tau) = 0.1281552; symmetric for 0.1, and 0.025/0.975 give 0.025 * 1.959964 each.
  it('scores an interval that holds the actual by its width, and the pinball loss by hand', () => {
    const r = intervalMetrics([10], [10], [1], [0, 1, 2], 1)
    expect(r.msis).toBeCloseTo(3.919928, 6)
    expect(r.pinball).toBeCloseTo((2 * 0.1281552 + 2 * 0.025 * 1.959964) / 5, 6)
  })
  // M4 competition interval score: a miss below the lower bound costs (2/0.05) times the miss.
  it('charges 40 times a miss outside the 95% interval', () => {
    const inside = intervalMetrics([10], [10], [1], [0, 1, 2], 1).msis!
    const below = intervalMetrics([5], [10], [1], [0, 1, 2], 1).msis!
    expect(below - inside).toBeCloseTo(40 * (10 - 1.959964 - 5), 4)
  })
})
