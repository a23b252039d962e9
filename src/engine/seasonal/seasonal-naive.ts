/**
 * 'last-season': the value one season ago, y[n + h] = y[n + h - m*(floor((h-1)/m) + 1)].
 * Forecast-error variance (floor((h-1)/m) + 1) * sigma^2, sigma^2 the mean squared
 * one-step residual: Hyndman and Athanasopoulos, "Forecasting: Principles and
 * Practice", 3rd ed., section 5.5 (from memory). Needs two full seasons (common practice).
 */
import type { FitContext, ModelFit, ModelSpec } from '../types.js'
import { checkFinite, checkFitted, checkHorizon, checkSeasonLength, checkSeries } from '../trend/guards.js'

export function fitSeasonalNaive(series: readonly number[], seasonLength: number): ModelFit {
  const m = seasonLength
  checkSeasonLength(m, 'last-season')
  checkSeries(series, 'last-season', 2 * m)
  const n = series.length
  const fitted = new Array<number>(n)
  let sse = 0
  for (let t = 0; t < n; t++) {
    if (t < m) {
      fitted[t] = NaN
    } else {
      fitted[t] = series[t - m]!
      const e = series[t]! - series[t - m]!
      sse += e * e
    }
  }
  const sigma2 = sse / (n - m)
  checkFinite([sigma2], 'last-season')
  checkFitted(fitted, m, 'last-season')
  const lastSeason = series.slice(n - m)
  return {
    model: 'last-season',
    params: { lastSeason },
    fitted,
    forecast(horizon: number): number[] {
      checkHorizon(horizon)
      const out = new Array<number>(horizon)
      for (let h = 1; h <= horizon; h++) out[h - 1] = lastSeason[(h - 1) % m]!
      return out
    },
    forecastVariance(horizon: number): number[] {
      checkHorizon(horizon)
      const out = new Array<number>(horizon)
      for (let h = 1; h <= horizon; h++) out[h - 1] = (Math.floor((h - 1) / m) + 1) * sigma2
      checkFinite(out, 'last-season')
      return out
    },
  }
}

export const seasonalNaive: ModelSpec = {
  name: 'last-season',
  family: 'seasonal',
  complexity: 0,
  seasonal: true,
  requiresPositive: false,
  minLength: (m: number) => 2 * m,
  fit: (series: readonly number[], ctx: FitContext) => fitSeasonalNaive(series, ctx.seasonLength),
}
