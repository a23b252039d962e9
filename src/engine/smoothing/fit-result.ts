/**
 * The fitted model from estimated parameters and initial states (on the series divided
 * by max|y|, see fit.ts): one run of the recursion, results rescaled to the original
 * units, and the analytical forecast variance for the additive models (class 1 of
 * Hyndman, Koehler, Ord and Snyder 2008, ch. 6) with sigma^2 = SSE / (n - k).
 * `fitted` is NaN only at index 0 of SES (its level starts at y[0]).
 */
import type { ModelFit } from '../types.js'
import { finite, type SmoothingShape } from './input.js'
import { runSmoothing } from './recursions.js'
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

/** @param y the series divided by `scale`; m the season length (1 without season) */
export function smoothingFit(shape: SmoothingShape, y: Float64Array, scale: number, m: number, est: Estimate): ModelFit {
  const n = y.length
  const kind = shape.seasonal
  const hasTrend = shape.trend !== 'none'
  const damped = shape.trend === 'damped'
  const { alpha, beta, gamma, phi } = est
  // Run on the scaled series (no overflow for huge values), then rescale.
  const run = runSmoothing(y, {
    alpha,
    beta,
    gamma,
    phi,
    seasonLength: m,
    seasonal: kind ?? undefined,
    initial: { level: est.level, trend: est.trend, seasonal: kind ? Array.from(est.seasonal) : undefined },
  })
  const level = est.level * scale
  const trend = est.trend * scale
  const seasonal: number[] = []
  for (let j = 0; j < est.seasonal.length; j++) seasonal.push(kind === 'add' ? est.seasonal[j] * scale : est.seasonal[j])
  const forecast = (h: number): number[] => {
    const out = run.forecast(h)
    for (let i = 0; i < out.length; i++) out[i] = finite(out[i] * scale)
    return out
  }

  // SES starts from level = y[0], so its first prediction is not a forecast.
  const firstFitted = hasTrend || kind ? 0 : 1
  const fitted = run.fitted
  for (let t = 0; t < n; t++) fitted[t] *= scale
  if (firstFitted === 1) fitted[0] = NaN
  const params: Record<string, number | number[]> = { alpha, initialLevel: level }
  if (hasTrend) {
    params.beta = beta
    params.initialTrend = trend
  }
  if (damped) params.phi = phi
  if (kind) {
    params.gamma = gamma
    params.initialSeasonal = seasonal
  }
  if (kind === 'mul') return { model: shape.name, params, fitted, forecast } // no class-1 formula: empirical intervals

  // sigma^2 = SSE / (n - k), k = smoothing parameters + initial states (HKOS 2008, ch. 6).
  const used = n - firstFitted
  const k = 1 + (hasTrend ? 2 : 0) + (damped ? 1 : 0) + (kind ? m : 0) + 1
  const sse = firstFitted === 1 ? run.sse - run.residuals[0] ** 2 : run.sse
  const sigma2 = (sse / Math.max(1, used - k)) * scale * scale
  if (!Number.isFinite(sigma2)) return { model: shape.name, params, fitted, forecast } // beyond double range
  const shapeForVariance = { alpha, beta, gamma, phi, seasonLength: m }
  const forecastVariance = (h: number): number[] => {
    const out = additiveErrorVariance(shapeForVariance, sigma2, h)
    for (let i = 0; i < out.length; i++) out[i] = finite(out[i])
    return out
  }
  return { model: shape.name, params, fitted, forecast, forecastVariance }
}
