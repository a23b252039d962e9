/**
 * 'last-value': the last value carried forward (random-walk forecast).
 * Forecast-error variance h * sigma^2 with sigma^2 the mean squared one-step
 * residual: the benchmark-method table of Hyndman and Athanasopoulos,
 * "Forecasting: Principles and Practice", 3rd ed., section 5.5 (from memory).
 */
import type { FitContext, ModelFit, ModelSpec } from '../types.js'
import { checkFinite, checkFitted, checkHorizon, checkSeries } from './guards.js'

export function fitNaive(series: readonly number[]): ModelFit {
  checkSeries(series, 'last-value', 1)
  const n = series.length
  const last = series[n - 1]!
  const fitted = new Array<number>(n)
  fitted[0] = NaN
  let sse = 0
  for (let t = 1; t < n; t++) {
    fitted[t] = series[t - 1]!
    const e = series[t]! - series[t - 1]!
    sse += e * e
  }
  const sigma2 = n > 1 ? sse / (n - 1) : NaN
  checkFitted(fitted, 1, 'last-value')
  const fit: ModelFit = {
    model: 'last-value',
    params: { level: last },
    fitted,
    forecast(horizon: number): number[] {
      checkHorizon(horizon)
      return new Array<number>(horizon).fill(last)
    },
  }
  if (n < 2) return fit // no residual yet: no variance estimate
  checkFinite([sigma2], 'last-value')
  return {
    ...fit,
    forecastVariance(horizon: number): number[] {
      checkHorizon(horizon)
      const out = new Array<number>(horizon)
      for (let h = 1; h <= horizon; h++) out[h - 1] = h * sigma2
      checkFinite(out, 'last-value')
      return out
    },
  }
}

export const naive: ModelSpec = {
  name: 'last-value',
  family: 'level',
  complexity: 0,
  seasonal: false,
  requiresPositive: false,
  minLength: () => 1,
  fit: (series: readonly number[], _ctx: FitContext) => fitNaive(series),
}
