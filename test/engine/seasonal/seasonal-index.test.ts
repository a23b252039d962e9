import { describe, expect, it } from 'vitest'
import { approxEqual } from '../../../src/engine/numeric.js'
import { fitSeasonalIndex } from '../../../src/engine/seasonal/index.js'
import { seasonalIndex } from '../../../src/engine/seasonal/seasonal-index.js'
import r from '../fixtures/r/decompose-airpassengers.json' with { type: 'json' }
import { expectEngineError, expectInputGuards, expectSane } from '../trend/spec-checks.js'

/** Sum of squared one-step errors on the original scale, computed independently. */
function sse(series: readonly number[], fitted: readonly number[]): number {
  let s = 0
  for (let t = 1; t < series.length; t++) s += (series[t]! - fitted[t]!) ** 2
  return s
}

describe('level-smoothing-season-averages', () => {
  it('rejects bad input, all-zero data and a bad alpha', () => {
    expectInputGuards(seasonalIndex, 4)
    expectEngineError(() => fitSeasonalIndex(new Array(8).fill(0), 4), 'not-positive')
    expectEngineError(() => fitSeasonalIndex([1, 2, 3, 4, 5, 6, 7, 8], 4, 0), 'invalid-option')
    expect(seasonalIndex.requiresPositive).toBe(true)
  })

  it('forecasts a constant series as itself', () => {
    expect(expectSane(fitSeasonalIndex(new Array(12).fill(9), 4), 12)).toEqual(new Array(12).fill(9))
  })

  // Hand check: a fixed pattern at a constant level is forecast exactly.
  it('repeats an exact seasonal pattern', () => {
    const pattern = [5, 10, 15, 10]
    const fit = fitSeasonalIndex([...pattern, ...pattern, ...pattern], 4)
    fit.forecast(4).forEach((v, i) => expect(approxEqual(v, pattern[i]!, 1e-12)).toBe(true))
  })

  // Source: R stats::HoltWinters(x / factors, alpha = 0.3, beta = FALSE, gamma = FALSE)
  // on AirPassengers (scripts/fixtures/r_decompose.R). Tolerance 1e-12; measured < 5e-16.
  it('matches R HoltWinters level at a fixed alpha on AirPassengers', () => {
    const fit = fitSeasonalIndex(r.series, 12, r.seasonalIndex.alpha)
    expect(approxEqual(fit.params.level as number, r.seasonalIndex.level, 1e-12)).toBe(true)
    fit.forecast(r.horizon).forEach((v, i) => expect(approxEqual(v, r.seasonalIndex.forecast[i]!, 1e-12)).toBe(true))
  })

  it('estimates an alpha no worse than any point of a fine grid', () => {
    const fit = seasonalIndex.fit(r.series, { seasonLength: 12 })
    expectSane(fit, r.series.length)
    const best = sse(r.series, fit.fitted)
    for (let a = 0.01; a <= 1; a += 0.01) {
      expect(best).toBeLessThanOrEqual(sse(r.series, fitSeasonalIndex(r.series, 12, a).fitted) * (1 + 1e-12))
    }
  })
})
