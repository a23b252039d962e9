/**
 * 'last-value-drift': the random walk with drift. The last value carried forward along
 * the average change over the history,
 *   yhat[n + h] = y[n] + h * c,   c = (y[n] - y[1]) / (n - 1),
 * the maximum-likelihood drift of y[t] = y[t - 1] + c + e[t] (the mean of the first
 * differences). Forecast-error variance sigma^2 * h * (1 + h / (n - 1)), sigma^2 the mean
 * squared one-step residual about the drift (n - 2 degrees of freedom) and the second
 * factor the uncertainty of the estimated drift: the benchmark methods of Hyndman and
 * Athanasopoulos, "Forecasting: Principles and Practice", 3rd ed., section 5.5 (from
 * memory).
 *
 * A seasonal history (the 90% autocorrelation test of the Theta method, trend/theta.ts) is
 * seasonally adjusted first by classical decomposition and the season put back on the
 * forecasts, as the M4 competition's benchmarks treat seasonality (Makridakis, Spiliotis
 * and Assimakopoulos 2020, IJF 36(1), from memory); with a multiplicative figure the
 * variance is scaled by the square of the factor.
 *
 * In the default pool only for frequencies without a season (yearly and the like), and
 * fitted at any season length when a request lists it. Decided on the M3 training split
 * (bench/RESULTS.md, "The random walk with drift"): there it lowered the yearly OWA from
 * 0.914 to 0.900 and the OWA of all 3,003 series from 0.887 to 0.882, while in the pool
 * of every frequency it made the monthly selections worse (0.897 to 0.903, or 0.902
 * seasonally adjusted as here).
 */
import type { FitContext, ModelFit, ModelSpec } from '../types.js'
import { checkFinite, checkFitted, checkHorizon, checkSeries } from './guards.js'
import { applyAdjustment, thetaSeasonalAdjustment } from './theta.js'

const NAME = 'last-value-drift'

export function fitDrift(series: readonly number[], seasonLength: number): ModelFit {
  checkSeries(series, NAME, 2)
  const n = series.length
  const m = seasonLength
  const { figure, multiplicative, adjusted, factor, reseason } = applyAdjustment(series, thetaSeasonalAdjustment(series, m), m)
  const last = adjusted[n - 1]!
  const drift = (last - adjusted[0]!) / (n - 1)
  const fitted = new Array<number>(n)
  fitted[0] = NaN
  let sse = 0
  for (let t = 1; t < n; t++) {
    const inner = adjusted[t - 1]! + drift
    sse += (adjusted[t]! - inner) ** 2
    fitted[t] = reseason(inner, t)
  }
  checkFinite([drift], NAME)
  checkFitted(fitted, 1, NAME)
  const params: Record<string, number | number[]> = { level: last, drift }
  if (figure.length > 0) params[multiplicative ? 'seasonFactors' : 'seasonOffsets'] = figure.slice()
  const fit: ModelFit = {
    model: NAME,
    params,
    fitted,
    forecast(horizon: number): number[] {
      checkHorizon(horizon)
      const out = new Array<number>(horizon)
      for (let h = 1; h <= horizon; h++) out[h - 1] = reseason(last + h * drift, n + h - 1)
      checkFinite(out, NAME)
      return out
    },
  }
  // The drift takes one degree of freedom: a variance needs a residual beyond it.
  if (n < 3) return fit
  const sigma2 = sse / (n - 2)
  checkFinite([sigma2], NAME)
  return {
    ...fit,
    forecastVariance(horizon: number): number[] {
      checkHorizon(horizon)
      const out = new Array<number>(horizon)
      for (let h = 1; h <= horizon; h++) {
        const scale = multiplicative ? factor(n + h - 1) ** 2 : 1
        out[h - 1] = sigma2 * h * (1 + h / (n - 1)) * scale
      }
      checkFinite(out, NAME)
      return out
    },
  }
}

export const drift: ModelSpec = {
  name: NAME,
  family: 'trend',
  complexity: 1,
  seasonal: false,
  requiresPositive: false,
  defaultOnlyWithoutSeason: true,
  minLength: () => 2,
  fit: (series: readonly number[], ctx: FitContext) => fitDrift(series, ctx.seasonLength),
}
