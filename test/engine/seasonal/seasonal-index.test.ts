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

  // Source: R stats::predict.HoltWinters(prediction.interval = TRUE) on the same fit
  // (scripts/fixtures/r_decompose.R): the growth of the variance with h, 1 + (h - 1) alpha^2.
  // R's one-step variance is var(residuals) (centred); ours is their mean square, worked out
  // here from the fit's own one-step errors.
  it('has the SES variance on the adjusted scale, times the factor squared', () => {
    const fit = fitSeasonalIndex(r.series, 12, r.seasonalIndex.alpha)
    const factors = fit.params.seasonFactors as number[]
    const n = r.series.length
    let ss = 0
    for (let t = 1; t < n; t++) ss += ((r.series[t]! - fit.fitted[t]!) / factors[t % 12]!) ** 2
    const sigma2 = ss / (n - 1)
    const ours = fit.forecastVariance!(r.horizon).map((v, i) => v / factors[(n + i) % 12]! ** 2)
    expect(approxEqual(ours[0]!, sigma2, 1e-12)).toBe(true)
    const theirs = r.seasonalIndex.adjustedVariance
    ours.forEach((v, i) => expect(approxEqual(v / ours[0]!, theirs[i]! / theirs[0]!, 1e-12), `step ${i + 1}`).toBe(true))
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
