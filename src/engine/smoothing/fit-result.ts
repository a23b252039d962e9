/**
 * The fitted model from estimated parameters and initial states (on the series divided
 * by max|y|, see fit.ts): one run of the recursion, results rescaled to the original
 * units, and the analytical forecast variance for the additive models (class 1 of
 * Hyndman, Koehler, Ord and Snyder 2008, ch. 6) with sigma^2 = SSE / (n - k).
 * `fitted` is NaN only at index 0 of SES (its level starts at y[0]). It is computed on
 * first read (selection reads it only for the refitted shortlist, not for the holdout
 * fits), by a second pass over the series: the pass that gives the final states keeps no
 * arrays.
 */
import type { ModelFit, ModelName, ModelParams } from '../types.js'
import { finite, type SmoothingShape } from './input.js'
import { forecastStates, seasonalAheadOf, smoothingPass } from './recursions.js'
import { additiveErrorVariance } from './variance.js'

export interface Estimate {
  readonly alpha: number
  readonly beta: number
  readonly gamma: number
  readonly phi: number
  /** Initial states on the scaled series; `seasonal` has m entries (empty without season). */
  readonly level: number
  readonly trend: number
  readonly seasonal: Float64Array
}

/**
 * @param series the original series (callers treat it as read-only: the fitted values
 *   are computed from it on first read); y = series / scale (may be scratch that is
 *   reused after this returns); m the season length (1 without season)
 */
export function smoothingFit(shape: SmoothingShape, series: readonly number[], y: Float64Array, scale: number, m: number, est: Estimate): ModelFit {
  const n = y.length
  const kind = shape.seasonal
  const hasTrend = shape.trend !== 'none'
  const damped = shape.trend === 'damped'
  const { alpha, beta, gamma, phi } = est
  // Run on the scaled series (no overflow for huge values), then rescale.
  const seasonalStart = new Float64Array(kind ? m : 1)
  if (kind) seasonalStart.set(est.seasonal)
  const s = seasonalStart.slice()
  const end = smoothingPass(y, alpha, beta, gamma, phi, kind, s, est.level, est.trend, null, null)
  const seasonalAhead = seasonalAheadOf(s, kind, n)
  const level = est.level * scale
  const trend = est.trend * scale
  const seasonal: number[] = []
  for (let j = 0; j < est.seasonal.length; j++) seasonal.push(kind === 'add' ? est.seasonal[j]! * scale : est.seasonal[j]!)
  const forecast = (h: number): number[] => {
    const out = forecastStates(end.level, end.trend, phi, kind, seasonalAhead, h)
    for (let i = 0; i < out.length; i++) out[i] = finite(out[i]! * scale)
    return out
  }

  // SES starts from level = y[0], so its first prediction is not a forecast.
  const firstFitted = hasTrend || kind ? 0 : 1
  let fittedValues: number[] | undefined
  // Memoised: every read returns the same array.
  const fittedOnce = (): number[] => {
    if (fittedValues) return fittedValues
    const out = new Array<number>(n)
    const z = new Array<number>(n)
    for (let t = 0; t < n; t++) z[t] = series[t]! / scale
    smoothingPass(z, alpha, beta, gamma, phi, kind, seasonalStart, est.level, est.trend, out, null)
    for (let t = 0; t < n; t++) out[t]! *= scale
    if (firstFitted === 1) out[0] = NaN
    fittedValues = out
    return out
  }
  const params: Record<string, number | number[]> = { levelWeight: alpha, startLevel: level }
  if (hasTrend) {
    params.trendWeight = beta
    params.startTrend = trend
  }
  if (damped) params.damping = phi
  if (kind) {
    params.seasonWeight = gamma
    params.startSeason = seasonal
  }
  if (kind === 'mul') return new SmoothingFit(shape.name, params, fittedOnce, forecast) // no class-1 formula: empirical intervals

  // sigma^2 = SSE / (n - k), k = smoothing parameters + initial states (HKOS 2008, ch. 6).
  const used = n - firstFitted
  const k = 1 + (hasTrend ? 2 : 0) + (damped ? 1 : 0) + (kind ? m : 0) + 1
  const sse = firstFitted === 1 ? end.sse - end.firstResidual ** 2 : end.sse
  const sigma2 = (sse / Math.max(1, used - k)) * scale * scale
  if (!Number.isFinite(sigma2)) return new SmoothingFit(shape.name, params, fittedOnce, forecast) // beyond double range
  const shapeForVariance = { alpha, beta, gamma, phi, seasonLength: m }
  const forecastVariance = (h: number): number[] => {
    const out = additiveErrorVariance(shapeForVariance, sigma2, h)
    for (let i = 0; i < out.length; i++) out[i] = finite(out[i]!)
    return out
  }
  return new SmoothingFit(shape.name, params, fittedOnce, forecast, forecastVariance)
}

/**
 * A smoothing fit whose `fitted` values are computed on first read. A class with the
 * getter on its prototype: an object literal with a getter costs V8 a slow-path
 * creation per fit (measured: about 7% of a Holt fit).
 */
class SmoothingFit implements ModelFit {
  readonly model: ModelName
  readonly params: ModelParams
  readonly forecast: (horizon: number) => number[]
  readonly forecastVariance?: (horizon: number) => number[]
  readonly #fitted: () => number[]

  constructor(
    model: ModelName,
    params: ModelParams,
    fitted: () => number[],
    forecast: (horizon: number) => number[],
    forecastVariance?: (horizon: number) => number[],
  ) {
    this.model = model
    this.params = params
    this.forecast = forecast
    this.forecastVariance = forecastVariance // undefined for the multiplicative models: empirical intervals
    this.#fitted = fitted
  }

  get fitted(): number[] {
    return this.#fitted()
  }
}
