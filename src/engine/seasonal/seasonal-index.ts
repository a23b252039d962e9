/**
 * 'level-smoothing-season-averages': multiplicative seasonal factors by ratio to the overall average
 * (`seasonalPositionFactors`), simple exponential smoothing of the level on the
 * de-seasonalised series d[t] = y[t] / factor(t), forecast = level * factor(n + h).
 *
 * level[0] = d[0], level[t] = alpha * d[t] + (1 - alpha) * level[t-1]; fitted[t] =
 * level[t-1] * factor(t) for t >= 1, NaN at t = 0. alpha in [0.0001, 1] minimises
 * the one-step squared errors on the original scale, sum of (y[t] - fitted[t])^2
 * (grid plus golden-section search). Needs two full seasons (common practice).
 *
 * Forecast-error variance: simple exponential smoothing's, sigma^2 (1 + (h - 1) alpha^2)
 * (ETS ANN, Hyndman, Koehler, Ord & Snyder 2008, Table 6.1, via smoothing/variance.ts; from
 * memory), on the de-seasonalised scale with sigma^2 the mean square of its one-step errors
 * d[t] - level[t-1], times the square of the step's factor (the factors taken as known).
 * Without it the engine's fallback sigma_1 sqrt(h) applied (bench/RESULTS.md, "Variances of
 * the season-averages models").
 */
import { EngineInputError } from '../errors.js'
import type { FitContext, ModelFit, ModelSpec } from '../types.js'
import { checkFinite, checkFitted, checkHorizon, checkSeasonLength, checkSeries } from '../trend/guards.js'
import { levels, levelSse, minimiseOnInterval } from '../trend/level-smoothing.js'
import { additiveErrorVariance } from '../smoothing/variance.js'
import { seasonalPositionFactors } from './decompose.js'

export const ALPHA_MIN = 0.0001

/** @param alpha fixed smoothing weight in (0, 1]; omitted: estimated. */
export function fitSeasonalIndex(series: readonly number[], seasonLength: number, alpha?: number): ModelFit {
  const m = seasonLength
  checkSeasonLength(m, 'level-smoothing-season-averages')
  checkSeries(series, 'level-smoothing-season-averages', 2 * m)
  if (alpha !== undefined && !(alpha > 0 && alpha <= 1)) {
    throw new EngineInputError('invalid-option', 'alpha must be in (0, 1]', 'alpha')
  }
  const factors = seasonalPositionFactors(series, m)
  const n = series.length
  const adjusted = new Array<number>(n)
  const weights = new Array<number>(n)
  for (let t = 0; t < n; t++) {
    weights[t] = factors[t % m]!
    adjusted[t] = series[t]! / weights[t]!
  }
  const a = alpha ?? minimiseOnInterval((x) => levelSse(adjusted, x, weights), ALPHA_MIN, 1)
  const path = levels(adjusted, a)
  const level = path[n - 1]!
  const fitted = new Array<number>(n)
  fitted[0] = NaN
  for (let t = 1; t < n; t++) fitted[t] = path[t - 1]! * weights[t]!
  checkFinite([level], 'level-smoothing-season-averages')
  checkFitted(fitted, 1, 'level-smoothing-season-averages')
  let ss = 0
  for (let t = 1; t < n; t++) ss += (adjusted[t]! - path[t - 1]!) ** 2
  const sigma2 = ss / (n - 1)
  checkFinite([sigma2], 'level-smoothing-season-averages')
  return {
    model: 'level-smoothing-season-averages',
    params: { levelWeight: a, level, seasonFactors: factors },
    fitted,
    forecast(horizon: number): number[] {
      checkHorizon(horizon)
      const out = new Array<number>(horizon)
      for (let h = 1; h <= horizon; h++) out[h - 1] = level * factors[(n + h - 1) % m]!
      checkFinite(out, 'level-smoothing-season-averages')
      return out
    },
    forecastVariance(horizon: number): number[] {
      checkHorizon(horizon)
      const shape = { alpha: a, beta: 0, gamma: 0, phi: 1, seasonLength: 1 }
      const out = additiveErrorVariance(shape, sigma2, horizon).map((v, i) => v * factors[(n + i) % m]! ** 2)
      checkFinite(out, 'level-smoothing-season-averages')
      return out
    },
  }
}

export const seasonalIndex: ModelSpec = {
  name: 'level-smoothing-season-averages',
  family: 'seasonal',
  complexity: 3,
  seasonal: true,
  requiresPositive: true,
  minLength: (m: number) => 2 * m,
  fit: (series: readonly number[], ctx: FitContext) => fitSeasonalIndex(series, ctx.seasonLength),
}
