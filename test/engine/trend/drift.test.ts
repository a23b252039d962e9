import { describe, expect, it } from 'vitest'
import { forecastSeries } from '../../../src/engine/index.js'
import { MODEL_REGISTRY } from '../../../src/engine/models.js'
import { candidateModels } from '../../../src/engine/select/candidates.js'
import { drift, fitDrift } from '../../../src/engine/trend/drift.js'
import { trendModels } from '../../../src/engine/trend/index.js'
import sm from '../fixtures/statsmodels_drift/drift.json' with { type: 'json' }
import r from '../fixtures/r/arima-drift.json' with { type: 'json' }
import air from '../fixtures/r/decompose-airpassengers.json' with { type: 'json' }
import { expectInputGuards, expectSane } from './spec-checks.js'

const relClose = (actual: number, expected: number, tol: number) =>
  expect(Math.abs(actual - expected) / Math.max(Math.abs(expected), 1e-12)).toBeLessThanOrEqual(tol)

/**
 * Our variance adds the drift's uncertainty, h / (n - 1), and divides the squared errors
 * by n - 2 (the drift takes a degree of freedom); the references give sigma2 * h with the
 * maximum-likelihood sigma2 = SSE / (n - 1). So ours = theirs * (n - 1) / (n - 2) * (1 + h / (n - 1)).
 */
function fromReferenceVariance(reference: readonly number[], n: number): number[] {
  return reference.map((v, i) => v * ((n - 1) / (n - 2)) * (1 + (i + 1) / (n - 1)))
}

/** Drift and forecasts to 1e-9, variances (converted as above) to 1e-7. */
function expectLikeReference(values: readonly number[], ref: { drift: number; forecast: readonly number[]; forecastVariance: readonly number[] }, horizon: number): void {
  const fit = fitDrift(values, 1)
  relClose(fit.params.drift as number, ref.drift, 1e-9)
  fit.forecast(horizon).forEach((v, i) => relClose(v, ref.forecast[i]!, 1e-9))
  const ours = fit.forecastVariance!(horizon)
  fromReferenceVariance(ref.forecastVariance, values.length).forEach((v, i) => relClose(ours[i]!, v, 1e-7))
}

describe('last-value-drift', () => {
  it('rejects empty, non-finite and one-point input', () => {
    expectInputGuards(drift, 1)
  })

  it('is the last of trendModels, with complexity 1, in the default pool only without a season', () => {
    expect(trendModels.map((s) => s.name)).toEqual(['last-value', 'moving-average', 'linear-trend', 'theta', 'last-value-drift'])
    expect(drift.complexity).toBe(1)
    const names = (seasonLength: number, listed?: 'last-value-drift'[]) =>
      candidateModels(MODEL_REGISTRY, listed, false, seasonLength).specs.map((s) => s.name)
    expect(names(1)).toContain('last-value-drift')
    expect(names(4)).not.toContain('last-value-drift')
    expect(names(12)).not.toContain('last-value-drift')
    expect(names(12, ['last-value-drift'])).toEqual(['last-value-drift'])
  })

  // Hand computation. Drift and variance: Hyndman and Athanasopoulos, FPP 3rd ed. 5.5 (from memory).
  it('carries the last value along the mean change; the variance adds the drift uncertainty', () => {
    const fit = fitDrift([3, 5, 4, 8], 1)
    // drift (8 - 3) / 3 = 5/3
    expect(fit.params.drift).toBeCloseTo(5 / 3, 12)
    expect(fit.fitted[0]).toBeNaN()
    expect(fit.fitted.slice(1).map((v) => +v.toFixed(9))).toEqual([4.666666667, 6.666666667, 5.666666667])
    expect(fit.forecast(2).map((v) => +v.toFixed(9))).toEqual([9.666666667, 11.333333333])
    // residuals 1/3, -8/3, 7/3: SSE = 114/9; sigma^2 = SSE / (n - 2) = 57/9; step h: sigma^2 h (1 + h/3)
    const v = fit.forecastVariance!(2)
    expect(v[0]).toBeCloseTo((57 / 9) * (4 / 3), 10)
    expect(v[1]).toBeCloseTo((57 / 9) * 2 * (5 / 3), 10)
    expect(fitDrift([2, 6], 1).forecastVariance).toBeUndefined() // no residual beyond the drift
    expect(expectSane(fitDrift([5, 5, 5, 5], 1), 4)).toEqual(new Array(12).fill(5))
  })

  // Source: statsmodels 0.13.5 ARIMA(order=(0, 1, 0), trend='t'), exact likelihood, on yearly
  // M3 training parts and Nile (fixture from scripts/fixtures/statsmodels_drift.py).
  it('matches statsmodels ARIMA(0,1,0) with a time trend: drift, forecasts and variances', () => {
    expect(sm.cases.length).toBe(7)
    for (const c of sm.cases) expectLikeReference(c.values, c, sm.horizon)
  })

  // Source: base R 4.2 stats::arima(order = c(0, 1, 0), xreg = 1..n, method = "ML") and predict,
  // on datasets::LakeHuron and datasets::WWWusage (fixture from scripts/fixtures/r_drift.R).
  it('matches base R arima with the time index as regressor', () => {
    for (const c of [r.LakeHuron, r.WWWusage]) expectLikeReference(c.series, c, r.horizon)
  })

  it('puts a season back when the history has one (listed for monthly data)', () => {
    // Public data: AirPassengers (R datasets, via the R fixture), monthly, rising, peaking in summer.
    const y = air.series
    const n = y.length
    const fit = fitDrift(y, 12)
    expect(fit.params.seasonFactors).toHaveLength(12)
    const fc = expectSane(fit, n, 12)
    const peak = (v: readonly number[]) => v.indexOf(Math.max(...v))
    expect(peak(fc)).toBe(peak(y.slice(n - 12)))
    // Not a flat line: the year ahead swings as the last year did, within a quarter of its range.
    const range = (v: readonly number[]) => Math.max(...v) - Math.min(...v)
    expect(Math.abs(range(fc) - range(y.slice(n - 12))) / range(y.slice(n - 12))).toBeLessThan(0.25)
  })

  it('is a candidate of yearly series by default and not of monthly ones', () => {
    // Public data: LakeHuron (R datasets, yearly) and AirPassengers (monthly), from the R fixtures.
    const yearly = forecastSeries({ demand: r.LakeHuron.series, frequency: 'year', horizon: 3 })
    const monthly = forecastSeries({ demand: air.series, frequency: 'month', horizon: 6 })
    if ('failure' in yearly || 'failure' in monthly) throw new Error('expected forecasts')
    expect(yearly.candidates.some((c) => c.model === 'last-value-drift' && c.status === 'scored')).toBe(true)
    expect(monthly.candidates.some((c) => c.model === 'last-value-drift')).toBe(false)
  })
})
