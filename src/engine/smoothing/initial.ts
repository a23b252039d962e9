/**
 * Heuristic initial states (not optimised, to keep fitting cheap). All states are
 * "at time -1", i.e. just before y[0]. Common practice; the trend line on the first
 * points follows the heuristic described by Hyndman, Koehler, Ord and Snyder (2008),
 * sec. 2.6.1 (from memory), simplified.
 */
import type { SeasonalKind } from './recursions.js'

/** Level only: level = y[0] (as NIST/SEMATECH e-Handbook 6.4.3.1). */
export function initialLevel(y: ArrayLike<number>): number {
  return y[0]!
}

/**
 * Level and trend from an ordinary least-squares line a + b*t through the first
 * min(n, 10) points (t = 0 at y[0]): trend = b, level = a - b, so that the first
 * one-step prediction of an undamped model is the line's value at t = 0.
 * With one point, trend = 0.
 */
export function initialLevelTrend(y: ArrayLike<number>): { level: number; trend: number } {
  const k = Math.min(y.length, 10)
  if (k < 2) return { level: y[0]!, trend: 0 }
  const tMean = (k - 1) / 2
  let yMean = 0
  for (let t = 0; t < k; t++) yMean += y[t]!
  yMean /= k
  let sxy = 0
  let sxx = 0
  for (let t = 0; t < k; t++) {
    const dt = t - tMean
    sxy += dt * (y[t]! - yMean)
    sxx += dt * dt
  }
  const slope = sxy / sxx
  const intercept = yMean - slope * tMean
  return { level: intercept - slope, trend: slope }
}

/** Full seasons used by `initialSeasonalStates` at most (common practice: a few years). */
export const INITIAL_SEASONS = 4

/**
 * Seasonal start from the first K = min(floor(n / m), 4) full seasons (needs n >= 2m),
 * a simplified classical decomposition (common practice):
 *   A_k = mean of season k (k = 0..K-1); slope = least-squares slope of A_k on k;
 *   trend = slope / m; trend line T(t) = Abar + trend * (t - (Km - 1) / 2);
 *   level = T(-1);
 *   seasonal[j] = mean over the K seasons of y[t] - T(t) (additive) or
 *   y[t] / T(t) (multiplicative; ratio to the season mean when T(t) <= 0),
 *   then normalised to sum 0 (additive) or mean 1 (multiplicative).
 */
export function initialSeasonalStates(
  y: ArrayLike<number>,
  m: number,
  kind: SeasonalKind,
  /** Receives the m seasonal states (allocated when not given). */
  seasonal: Float64Array = new Float64Array(m),
  maxSeasons = INITIAL_SEASONS,
  /** false: no trend (trend 0, line = mean of the seasons used). */
  withTrend = true,
): { level: number; trend: number; seasonal: Float64Array } {
  const seasons = Math.max(2, Math.min(Math.floor(y.length / m), maxSeasons))
  const means: number[] = []
  let grand = 0
  for (let k = 0; k < seasons; k++) {
    let a = 0
    for (let j = 0; j < m; j++) a += y[k * m + j]!
    means.push(a / m)
    grand += a / m
  }
  grand /= seasons
  const kMean = (seasons - 1) / 2
  let sxy = 0
  let sxx = 0
  for (let k = 0; k < seasons; k++) {
    sxy += (k - kMean) * (means[k]! - grand)
    sxx += (k - kMean) * (k - kMean)
  }
  const trend = withTrend ? sxy / sxx / m : 0
  const centre = (seasons * m - 1) / 2
  const line = (t: number): number => grand + trend * (t - centre)
  let total = 0
  for (let j = 0; j < m; j++) {
    let v = 0
    for (let k = 0; k < seasons; k++) {
      const t = k * m + j
      if (kind === 'add') v += y[t]! - line(t)
      else {
        const tl = line(t)
        v += tl > 0 ? y[t]! / tl : y[t]! / means[k]!
      }
    }
    seasonal[j] = v / seasons
    total += seasonal[j]!
  }
  if (kind === 'add') {
    const shift = total / m
    for (let j = 0; j < m; j++) seasonal[j]! -= shift
  } else {
    const factor = total / m
    for (let j = 0; j < m; j++) seasonal[j]! /= factor
  }
  return { level: line(-1), trend, seasonal }
}
