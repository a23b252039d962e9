import { describe, expect, it } from 'vitest'
import { approxEqual } from '../../../src/engine/numeric.js'
import { fitDecomposition, fitDecompositionCma } from '../../../src/engine/seasonal/index.js'
import { decomposition, decompositionCma } from '../../../src/engine/seasonal/trend-times-factor.js'
import r from '../fixtures/r/decompose-airpassengers.json' with { type: 'json' }
import { expectEngineError, expectInputGuards, expectSane } from '../trend/spec-checks.js'

const close = (a: readonly number[], b: readonly number[], tol: number): void => {
  expect(a).toHaveLength(b.length)
  a.forEach((v, i) => expect(approxEqual(v, b[i]!, tol), `index ${i}: ${v} vs ${b[i]}`).toBe(true))
}

describe('decomposition and decomposition-cma', () => {
  for (const spec of [decomposition, decompositionCma]) {
    it(`${spec.name}: rejects bad input, non-positive data and season length 1`, () => {
      expectInputGuards(spec, 4)
      expectEngineError(() => spec.fit(new Array(8).fill(0), { seasonLength: 4 }), 'not-positive')
      expectEngineError(() => spec.fit([1, 2, 3, 4, 5, 6, 7, 8], { seasonLength: 1 }), 'invalid-option')
      expect(spec.minLength(12)).toBe(24)
    })

    it(`${spec.name}: forecasts a constant series as itself`, () => {
      const fc = expectSane(spec.fit(new Array(12).fill(7), { seasonLength: 4 }), 12)
      fc.forEach((v) => expect(approxEqual(v, 7, 1e-12)).toBe(true))
    })
  }

  // Invented quarterly series, the procedure worked through step by step.
  it('decomposition: worked example on an invented quarterly series', () => {
    const y = [20, 30, 40, 10, 24, 34, 44, 14, 28, 38, 48, 18]
    // 1. Quarter means: Q1 (20+24+28)/3 = 24, Q2 34, Q3 44, Q4 14; their mean 29.
    const factors = [24 / 29, 34 / 29, 44 / 29, 14 / 29]
    // 2. De-seasonalise: value / factor of its quarter.
    const d = y.map((v, t) => v / factors[t % 4]!)
    // 3. Least squares on t = 1..12: tMean 6.5, Sxx = sum (t - 6.5)^2 = 143.
    const dMean = d.reduce((s, v) => s + v, 0) / 12
    let sxy = 0
    for (let t = 1; t <= 12; t++) sxy += (t - 6.5) * (d[t - 1]! - dMean)
    const slope = sxy / 143
    const intercept = dMean - slope * 6.5
    // 4. Forecast quarter 13 (a Q1) and 14 (a Q2).
    const expected = [(intercept + slope * 13) * factors[0]!, (intercept + slope * 14) * factors[1]!]

    const fit = fitDecomposition(y, 4)
    close(fit.params.seasonFactors as number[], factors, 1e-14)
    expect(approxEqual(fit.params.slope as number, slope, 1e-12)).toBe(true)
    expect(approxEqual(fit.params.intercept as number, intercept, 1e-12)).toBe(true)
    close(fit.forecast(2), expected, 1e-12)
    expect(approxEqual(fit.fitted[0]!, (intercept + slope) * factors[0]!, 1e-12)).toBe(true)
    // A growing series gives a positive slope.
    expect(slope).toBeGreaterThan(0)
  })

  // Source: R, lm(x / factors ~ t) with factors by position mean / overall mean, on
  // AirPassengers (scripts/fixtures/r_decompose.R). Tolerance 1e-12; measured < 2e-15.
  it('decomposition: matches the R computation on AirPassengers', () => {
    const fit = fitDecomposition(r.series, 12)
    expect(approxEqual(fit.params.slope as number, r.decomposition.slope, 1e-12)).toBe(true)
    expect(approxEqual(fit.params.intercept as number, r.decomposition.intercept, 1e-12)).toBe(true)
    close(fit.forecast(r.horizon), r.decomposition.forecast, 1e-12)
    // R predict.lm(se.fit = TRUE): se.fit^2 + sigma^2 on the adjusted scale, times the factor squared.
    close(fit.forecastVariance!(r.horizon), r.decomposition.forecastVariance, 1e-9)
  })

  // Source: R decompose(type = "multiplicative") factors and lm(x / seasonal ~ t) on
  // AirPassengers (scripts/fixtures/r_decompose.R). Tolerance 1e-12; measured < 2e-15.
  it('decomposition-cma: matches R decompose + lm on AirPassengers', () => {
    const fit = fitDecompositionCma(r.series, 12)
    close(fit.params.seasonFactors as number[], r.multiplicative.figure, 1e-12)
    expect(approxEqual(fit.params.slope as number, r.decompositionCma.slope, 1e-12)).toBe(true)
    expect(approxEqual(fit.params.intercept as number, r.decompositionCma.intercept, 1e-12)).toBe(true)
    close(fit.forecast(r.horizon), r.decompositionCma.forecast, 1e-12)
    close(fit.forecastVariance!(r.horizon), r.decompositionCma.forecastVariance, 1e-9)
  })
})
