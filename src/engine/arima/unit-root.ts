/**
 * Differencing orders for automatic ARIMA (Hyndman and Khandakar 2008):
 *  - d: repeated KPSS tests of level stationarity (Kwiatkowski, Phillips, Schmidt and Shin
 *    1992): eta = sum S_t^2 / (n^2 s^2), S_t partial sums of deviations from the mean,
 *    s^2 the Newey-West long-run variance with Bartlett weights and
 *    l = floor(4 (n / 100)^(1/4)) lags; difference while eta > 0.463 (the 5% critical
 *    value, their table 1), at most twice.
 *  - D: one seasonal difference when the seasonal strength
 *    F_s = max(0, 1 - var(remainder) / var(seasonal + remainder)) (Wang, Smith and Hyndman
 *    2006) of an additive classical decomposition exceeds 0.64 (the threshold of the
 *    authors' software; from memory). Needs two full seasons.
 */
import { decomposeClassical } from '../seasonal/decompose.js'

export const KPSS_CRITICAL_5 = 0.463
export const SEASONAL_STRENGTH_THRESHOLD = 0.64

export function kpssStatistic(y: readonly number[]): number {
  const n = y.length
  let mean = 0
  for (const v of y) mean += v
  mean /= n
  const e = y.map((v) => v - mean)
  let partial = 0
  let sumS2 = 0
  for (const v of e) {
    partial += v
    sumS2 += partial * partial
  }
  const lags = Math.floor(4 * Math.pow(n / 100, 0.25))
  let s2 = 0
  for (const v of e) s2 += v * v
  s2 /= n
  for (let j = 1; j <= lags; j++) {
    let c = 0
    for (let t = j; t < n; t++) c += e[t]! * e[t - j]!
    s2 += (2 * (1 - j / (lags + 1)) * c) / n
  }
  if (!(s2 > 0)) return 0
  return sumS2 / (n * n * s2)
}

export function seasonalStrength(y: readonly number[], m: number): number {
  const dec = decomposeClassical(y, m, 'additive')
  const rem: number[] = []
  const sr: number[] = []
  for (let t = 0; t < y.length; t++) {
    if (!Number.isFinite(dec.random[t]!)) continue
    rem.push(dec.random[t]!)
    sr.push(dec.random[t]! + dec.seasonal[t]!)
  }
  const variance = (v: readonly number[]): number => {
    const mu = v.reduce((a, b) => a + b, 0) / v.length
    return v.reduce((a, b) => a + (b - mu) * (b - mu), 0) / v.length
  }
  const total = variance(sr)
  if (!(total > 0)) return 0
  return Math.max(0, 1 - variance(rem) / total)
}

export function seasonalDifferences(y: readonly number[], m: number): number {
  if (m < 2 || y.length < 2 * m + 1) return 0
  return seasonalStrength(y, m) > SEASONAL_STRENGTH_THRESHOLD ? 1 : 0
}

export function differences(y: readonly number[]): number {
  let w = y.slice()
  let d = 0
  while (d < 2 && w.length > 3 && kpssStatistic(w) > KPSS_CRITICAL_5) {
    const next: number[] = []
    for (let t = 1; t < w.length; t++) next.push(w[t]! - w[t - 1]!)
    w = next
    d++
  }
  return d
}
