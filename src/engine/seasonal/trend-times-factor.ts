/**
 * 'linear-trend-season-averages' and 'linear-trend-season-ratios': multiplicative seasonal factors, the
 * series de-seasonalised (value / factor), an OLS line on t = 1..n through the
 * de-seasonalised values, and forecast = (slope * t + intercept) * factor(t).
 *   'linear-trend-season-averages'     factors by ratio to the overall average (`seasonalPositionFactors`);
 *   'linear-trend-season-ratios' factors by ratio to the centred moving average, as
 *                       R `stats::decompose(type = "multiplicative")` (`decomposeClassical`).
 * Fitted values are the in-sample line times the factor. Needs two full seasons
 * (common practice) and data where no factor is zero.
 *
 * Forecast-error variance: the OLS prediction variance of the line on the de-seasonalised
 * scale, sigma^2 (1 + 1/n + (t - tMean)^2 / Sxx) with sigma^2 = SSE / (n - 2) (as for
 * 'linear-trend', trend/linear-trend.ts), times the square of the step's factor, the factors
 * taken as known. Without it the engine's fallback sigma_1 sqrt(h) applied (bench/RESULTS.md,
 * "Variances of the season-averages models").
 */
import type { FitContext, ModelFit, ModelName, ModelSpec } from '../types.js'
import { checkFinite, checkHorizon, checkSeasonLength, checkSeries } from '../trend/guards.js'
import { fitTrendOnIndex } from '../trend/linear-trend.js'
import { decomposeClassical, seasonalPositionFactors } from './decompose.js'

/** Trend-times-factor fit from given factors (position t mod m from the series start). */
export function fitTrendTimesFactor(
  series: readonly number[],
  factors: readonly number[],
  model: ModelName,
): ModelFit {
  const n = series.length
  const m = factors.length
  const adjusted = new Array<number>(n)
  for (let t = 0; t < n; t++) adjusted[t] = series[t]! / factors[t % m]!
  const { slope, intercept, xMean, sxx, sse } = fitTrendOnIndex(adjusted)
  const fitted = new Array<number>(n)
  for (let t = 0; t < n; t++) fitted[t] = (intercept + slope * (t + 1)) * factors[t % m]!
  checkFinite(fitted, model)
  const fit: ModelFit = {
    model,
    params: { slope, intercept, seasonFactors: factors.slice() },
    fitted,
    forecast(horizon: number): number[] {
      checkHorizon(horizon)
      const out = new Array<number>(horizon)
      for (let h = 1; h <= horizon; h++) out[h - 1] = (intercept + slope * (n + h)) * factors[(n + h - 1) % m]!
      checkFinite(out, model)
      return out
    },
  }
  if (n < 3) return fit
  const sigma2 = sse / (n - 2)
  checkFinite([sigma2], model)
  return {
    ...fit,
    forecastVariance(horizon: number): number[] {
      checkHorizon(horizon)
      const out = new Array<number>(horizon)
      for (let h = 1; h <= horizon; h++) {
        const d = n + h - xMean
        out[h - 1] = sigma2 * (1 + 1 / n + (d * d) / sxx) * factors[(n + h - 1) % m]! ** 2
      }
      checkFinite(out, model)
      return out
    },
  }
}

export function fitDecomposition(series: readonly number[], seasonLength: number): ModelFit {
  checkSeasonLength(seasonLength, 'linear-trend-season-averages')
  checkSeries(series, 'linear-trend-season-averages', 2 * seasonLength)
  return fitTrendTimesFactor(series, seasonalPositionFactors(series, seasonLength), 'linear-trend-season-averages')
}

export function fitDecompositionCma(series: readonly number[], seasonLength: number): ModelFit {
  checkSeasonLength(seasonLength, 'linear-trend-season-ratios')
  checkSeries(series, 'linear-trend-season-ratios', 2 * seasonLength)
  const { figure } = decomposeClassical(series, seasonLength, 'multiplicative')
  return fitTrendTimesFactor(series, figure, 'linear-trend-season-ratios')
}

export const decomposition: ModelSpec = {
  name: 'linear-trend-season-averages',
  family: 'seasonal-trend',
  complexity: 3,
  seasonal: true,
  requiresPositive: true,
  minLength: (m: number) => 2 * m,
  fit: (series: readonly number[], ctx: FitContext) => fitDecomposition(series, ctx.seasonLength),
}

export const decompositionCma: ModelSpec = {
  name: 'linear-trend-season-ratios',
  family: 'seasonal-trend',
  complexity: 3,
  seasonal: true,
  requiresPositive: true,
  minLength: (m: number) => 2 * m,
  fit: (series: readonly number[], ctx: FitContext) => fitDecompositionCma(series, ctx.seasonLength),
}
