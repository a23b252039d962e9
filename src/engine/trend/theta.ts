/**
 * 'theta': the standard Theta method (Assimakopoulos and Nikolopoulos 2000) in the
 * closed form of Hyndman and Billah (2003), "Unmasking the Theta method": simple
 * exponential smoothing with drift equal to half the OLS slope b0,
 *   forecast(h) = level[n] + (b0 / 2) * (h - 1 + 1/alpha - (1 - alpha)^n / alpha),
 * the same expression statsmodels `ThetaModel` documents for theta = 2.
 *
 * Steps (as statsmodels 0.13.5 `ThetaModel.fit()` with its defaults, except the
 * seasonality test, see below):
 *  1. If m >= 2, n >= 2m and the lag-m autocorrelation is significant, the series
 *     is de-seasonalised by classical decomposition (`decomposeClassical`):
 *     multiplicative when every value is positive, otherwise additive.
 *     Test: |r_m| > 1.645 * sqrt((1 + 2 * sum_{k<m} r_k^2) / n), a 90% two-sided test
 *     with Bartlett's variance (the usual M3 practice, from memory; statsmodels uses
 *     n r_m^2 / (1 + sum_{k<m} r_k^2) > 1.645^2, slightly easier to pass).
 *  2. b0: OLS slope on t = 1..n; alpha: minimises the one-step SSE of SES with
 *     level[0] = y[0] over [0.0001, 1] (grid plus golden section).
 *  3. Forecast as above, re-seasonalised with the factor of each future position.
 * Fitted value at t >= 1 is the same formula from origin t (h = 1, n = t); NaN at t = 0.
 */
import { EngineInputError } from '../errors.js'
import type { FitContext, ModelFit, ModelSpec } from '../types.js'
import { decomposeClassical } from '../seasonal/decompose.js'
import { checkFinite, checkFitted, checkHorizon, checkSeries } from './guards.js'
import { levels, levelSse, minimiseOnInterval } from './level-smoothing.js'
import { fitTrendOnIndex } from './linear-trend.js'

const MIN_LENGTH = 3
export const THETA_ALPHA_MIN = 0.0001

export interface ThetaOptions {
  /** Fixed SES weight in (0, 1]; omitted: estimated. */
  readonly alpha?: number
  /** 'auto' (default): test and adjust as above; 'none': never de-seasonalise. */
  readonly seasonalAdjustment?: 'auto' | 'none'
}

/** 90% two-sided test of the lag-m autocorrelation with Bartlett's variance. */
export function isSeasonal(series: readonly number[], seasonLength: number): boolean {
  const n = series.length
  const m = seasonLength
  if (m < 2 || n <= m) return false
  let mu = 0
  for (let t = 0; t < n; t++) mu += series[t]!
  mu /= n
  let c0 = 0
  for (let t = 0; t < n; t++) c0 += (series[t]! - mu) * (series[t]! - mu)
  if (!(c0 > 0)) return false
  let bartlett = 1
  let rm = 0
  for (let k = 1; k <= m; k++) {
    let ck = 0
    for (let t = k; t < n; t++) ck += (series[t]! - mu) * (series[t - k]! - mu)
    const r = ck / c0
    if (k < m) bartlett += 2 * r * r
    else rm = r
  }
  return Math.abs(rm) > 1.645 * Math.sqrt(bartlett / n)
}

/** The seasonal figure Theta divides out (empty when the series is treated as non-seasonal). */
export interface ThetaAdjustment {
  readonly figure: readonly number[]
  readonly multiplicative: boolean
}

const NO_ADJUSTMENT: ThetaAdjustment = { figure: [], multiplicative: true }

/** Step 1 above: the classical-decomposition figure when m >= 2, n >= 2m and the test passes. */
export function thetaSeasonalAdjustment(series: readonly number[], seasonLength: number): ThetaAdjustment {
  const n = series.length
  const m = seasonLength
  if (!(m >= 2 && n >= 2 * m && isSeasonal(series, m))) return NO_ADJUSTMENT
  let min = Infinity
  for (let t = 0; t < n; t++) if (series[t]! < min) min = series[t]!
  const multiplicative = min > 0
  const figure = decomposeClassical(series, m, multiplicative ? 'multiplicative' : 'additive').figure
  return { figure, multiplicative }
}

export interface AppliedAdjustment extends ThetaAdjustment {
  readonly adjusted: number[]
  /** The seasonal term at period index i (1 or 0 without a figure). */
  factor(index: number): number
  /** A value of the adjusted scale at period index i put back on the series' scale. */
  reseason(value: number, index: number): number
}

/**
 * The series with the figure divided out (multiplicative) or subtracted (additive), and
 * the way back for fitted values and forecasts.
 */
export function applyAdjustment(series: readonly number[], adjustment: ThetaAdjustment, seasonLength: number): AppliedAdjustment {
  const { figure, multiplicative } = adjustment
  const m = seasonLength
  const adjusted = new Array<number>(series.length)
  for (let t = 0; t < series.length; t++) {
    if (figure.length === 0) adjusted[t] = series[t]!
    else adjusted[t] = multiplicative ? series[t]! / figure[t % m]! : series[t]! - figure[t % m]!
  }
  const factor = (index: number): number => (figure.length === 0 ? (multiplicative ? 1 : 0) : figure[index % m]!)
  const reseason = (value: number, index: number): number => (multiplicative ? value * factor(index) : value + factor(index))
  return { figure, multiplicative, adjusted, factor, reseason }
}

export function fitTheta(series: readonly number[], seasonLength: number, options: ThetaOptions = {}): ModelFit {
  checkSeries(series, 'theta', MIN_LENGTH)
  const { alpha: fixedAlpha, seasonalAdjustment = 'auto' } = options
  if (fixedAlpha !== undefined && !(fixedAlpha > 0 && fixedAlpha <= 1)) {
    throw new EngineInputError('invalid-option', 'alpha must be in (0, 1]', 'alpha')
  }
  const n = series.length
  const m = seasonLength
  const adjustment = seasonalAdjustment === 'auto' ? thetaSeasonalAdjustment(series, m) : NO_ADJUSTMENT
  const { figure, multiplicative, adjusted, reseason } = applyAdjustment(series, adjustment, m)
  const slope = fitTrendOnIndex(adjusted).slope
  const drift = slope / 2
  const alpha = fixedAlpha ?? minimiseOnInterval((a) => levelSse(adjusted, a), THETA_ALPHA_MIN, 1)
  const path = levels(adjusted, alpha)
  const level = path[n - 1]!
  // (1 - (1 - alpha)^k) / alpha, the drift multiplier for h = 1 from origin k.
  const fitted = new Array<number>(n)
  fitted[0] = NaN
  let decay = 1 - alpha
  for (let t = 1; t < n; t++) {
    fitted[t] = reseason(path[t - 1]! + drift * ((1 - decay) / alpha), t)
    decay *= 1 - alpha
  }
  const tail = (1 - Math.pow(1 - alpha, n)) / alpha
  checkFinite([slope, alpha, level, tail], 'theta')
  checkFitted(fitted, 1, 'theta')
  const params: Record<string, number | number[]> = { levelWeight: alpha, slope, drift, level }
  if (figure.length > 0) params[multiplicative ? 'seasonFactors' : 'seasonOffsets'] = figure.slice()
  return {
    model: 'theta',
    params,
    fitted,
    forecast(horizon: number): number[] {
      checkHorizon(horizon)
      const out = new Array<number>(horizon)
      for (let h = 1; h <= horizon; h++) out[h - 1] = reseason(level + drift * (h - 1 + tail), n + h - 1)
      checkFinite(out, 'theta')
      return out
    },
  }
}

export const theta: ModelSpec = {
  name: 'theta',
  family: 'trend',
  complexity: 3,
  seasonal: false,
  requiresPositive: false,
  minLength: () => MIN_LENGTH,
  fit: (series: readonly number[], ctx: FitContext) => fitTheta(series, ctx.seasonLength),
}
