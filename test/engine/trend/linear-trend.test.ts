import { linearRegression } from 'simple-statistics'
import { describe, expect, it } from 'vitest'
import { approxEqual } from '../../../src/engine/numeric.js'
import { fitLinearTrend, fitLinearTrendModel } from '../../../src/engine/trend/index.js'
import { linearTrend } from '../../../src/engine/trend/linear-trend.js'
import lm from '../fixtures/r/lm-trend.json' with { type: 'json' }
import { norris } from './nist-norris.js'
import { expectEngineError, expectInputGuards, expectSane } from './spec-checks.js'

const close = (a: readonly number[], b: readonly number[], tol: number): void => {
  expect(a).toHaveLength(b.length)
  a.forEach((v, i) => expect(approxEqual(v, b[i]!, tol), `index ${i}: ${v} vs ${b[i]}`).toBe(true))
}

describe('fitLinearTrend', () => {
  it('rejects unequal lengths, one point and constant x', () => {
    expectEngineError(() => fitLinearTrend([1, 2], [1]), 'invalid-option')
    expectEngineError(() => fitLinearTrend([1], [1]), 'series-too-short')
    expectEngineError(() => fitLinearTrend([2, 2, 2], [1, 2, 3]), 'invalid-option')
    expectEngineError(() => fitLinearTrend([1, 2, 3], [1, NaN, 3]), 'non-finite-value')
  })

  // Hand computation: xMean 2.5, yMean 2.75, Sxx 5, Sxy 5.5.
  it('fits a small line by hand', () => {
    const fit = fitLinearTrend([1, 2, 3, 4], [1, 3, 2, 5])
    expect(approxEqual(fit.slope, 1.1, 1e-15)).toBe(true)
    expect(Math.abs(fit.intercept)).toBeLessThan(1e-15)
  })

  // Source: NIST StRD "Norris" certified values (itl.nist.gov/div898/strd/lls/data/Norris.shtml).
  // Tolerance 1e-12 relative: measured error 5e-14 (intercept), rounded up.
  it('matches NIST StRD Norris certified values', () => {
    const fit = fitLinearTrend(norris.x, norris.y)
    expect(approxEqual(fit.slope, norris.certified.slope, 1e-12)).toBe(true)
    expect(approxEqual(fit.intercept, norris.certified.intercept, 1e-12)).toBe(true)
    expect(approxEqual(fit.sse, norris.certified.residualSumOfSquares, 1e-12)).toBe(true)
  })
})

describe('linear-trend model', () => {
  it('rejects empty, non-finite and too-short input', () => {
    expectInputGuards(linearTrend, 1)
  })

  it('forecasts a constant flat with zero variance and an all-zero series as zero', () => {
    const flat = fitLinearTrendModel([4, 4, 4, 4])
    expect(expectSane(flat, 4)).toEqual(new Array(12).fill(4))
    expect(flat.forecastVariance!(2)).toEqual([0, 0])
    expect(expectSane(fitLinearTrendModel([0, 0, 0]), 3)).toEqual(new Array(12).fill(0))
  })

  it('extends an exact line: y = 2t + 1', () => {
    const fit = fitLinearTrendModel([3, 5, 7, 9, 11])
    expect(fit.forecast(2).map((v) => Math.round(v * 1e12) / 1e12)).toEqual([13, 15])
    expect(fit.params.slope).toBeCloseTo(2, 14)
    expect(fit.params.intercept).toBeCloseTo(1, 14)
  })

  // Source: R stats::lm and predict.lm on datasets::LakeHuron and datasets::Nile
  // (fixture from scripts/fixtures/r_lm.R). Tolerance 1e-12 relative: measured < 1e-14.
  for (const name of ['LakeHuron', 'Nile'] as const) {
    it(`matches R lm and predict.lm on ${name}`, () => {
      const ref = lm[name]
      const fit = fitLinearTrendModel(ref.series)
      expect(approxEqual(fit.params.slope as number, ref.slope, 1e-12)).toBe(true)
      expect(approxEqual(fit.params.intercept as number, ref.intercept, 1e-12)).toBe(true)
      expect(approxEqual(Math.sqrt(fit.params.residualVariance as number), ref.sigma, 1e-12)).toBe(true)
      close(fit.forecast(lm.horizon), ref.forecast, 1e-12)
      // predict.lm: se.fit^2 + sigma^2 equals sigma^2 (1 + 1/n + (t - tMean)^2 / Sxx).
      close(fit.forecastVariance!(lm.horizon), ref.predictionVariance, 1e-12)
    })

    // Source: npm simple-statistics 7.12 linearRegression (independent implementation). 1e-12: measured < 1e-15.
    it(`matches simple-statistics linearRegression on ${name}`, () => {
      const y = lm[name].series
      const ref = linearRegression(y.map((v, i) => [i + 1, v]))
      const fit = fitLinearTrend(y.map((_, i) => i + 1), y)
      expect(approxEqual(fit.slope, ref.m, 1e-12)).toBe(true)
      expect(approxEqual(fit.intercept, ref.b, 1e-12)).toBe(true)
    })
  }
})
