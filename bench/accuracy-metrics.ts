/**
 * Error measures for the accuracy benchmark, written apart from the engine's own
 * metrics so the benchmark does not grade the engine with its own code.
 *
 * MASE: mean absolute error over the holdout divided by the in-sample MAE of the
 * seasonal naive forecast (naive when m = 1) on the training part
 * (Hyndman and Koehler 2006, "Another look at measures of forecast accuracy").
 * sMAPE: mean of 200 |y - f| / (|y| + |f|) in percent (the M3 form); a point where
 * both are zero counts as 0.
 */

export function seasonalNaiveScale(train: readonly number[], seasonLength: number): number | null {
  const m = Math.max(1, seasonLength)
  if (train.length <= m) return null
  let sum = 0
  for (let t = m; t < train.length; t++) sum += Math.abs(train[t]! - train[t - m]!)
  const scale = sum / (train.length - m)
  return scale > 0 && Number.isFinite(scale) ? scale : null
}

export function mase(actual: readonly number[], forecast: readonly number[], scale: number): number {
  let sum = 0
  for (let i = 0; i < actual.length; i++) sum += Math.abs(actual[i]! - forecast[i]!)
  return sum / actual.length / scale
}

export function smape(actual: readonly number[], forecast: readonly number[]): number {
  let sum = 0
  for (let i = 0; i < actual.length; i++) {
    const denominator = Math.abs(actual[i]!) + Math.abs(forecast[i]!)
    sum += denominator === 0 ? 0 : (200 * Math.abs(actual[i]! - forecast[i]!)) / denominator
  }
  return sum / actual.length
}

/** Points inside [lower, upper] (bounds included) and the number of points. */
export function covered(actual: readonly number[], lower: readonly number[], upper: readonly number[]): { inside: number; total: number } {
  let inside = 0
  for (let i = 0; i < actual.length; i++) if (actual[i]! >= lower[i]! && actual[i]! <= upper[i]!) inside++
  return { inside, total: actual.length }
}

export function mean(values: readonly number[]): number {
  return values.length === 0 ? NaN : values.reduce((a, b) => a + b, 0) / values.length
}

export function median(values: readonly number[]): number {
  if (values.length === 0) return NaN
  const sorted = [...values].sort((a, b) => a - b)
  const mid = Math.floor(sorted.length / 2)
  return sorted.length % 2 === 1 ? sorted[mid]! : (sorted[mid - 1]! + sorted[mid]!) / 2
}

/**
 * Percentile bootstrap interval of sum(numerator) / sum(denominator) (the ratio of two
 * means) when whole series are resampled with replacement, pairs kept together
 * (Efron and Tibshirani 1993, ch. 13, from memory). It shows how much the ratio of mean
 * MASE depends on which series happen to be in the set: with about 30 series a few
 * hard ones move it by several percent. `random` returns uniforms in [0, 1).
 */
export function bootstrapRatioInterval(
  numerator: readonly number[],
  denominator: readonly number[],
  level: number,
  resamples: number,
  random: () => number,
): { lower: number; upper: number } | null {
  const n = numerator.length
  if (n === 0 || denominator.length !== n || resamples < 1 || !(level > 0 && level < 1)) return null
  const ratios: number[] = []
  for (let r = 0; r < resamples; r++) {
    let a = 0
    let b = 0
    for (let i = 0; i < n; i++) {
      const k = Math.min(n - 1, Math.floor(random() * n))
      a += numerator[k]!
      b += denominator[k]!
    }
    const ratio = a / b
    if (Number.isFinite(ratio)) ratios.push(ratio)
  }
  if (ratios.length === 0) return null
  ratios.sort((x, y) => x - y)
  const at = (p: number): number => ratios[Math.min(ratios.length - 1, Math.max(0, Math.floor(p * ratios.length)))]!
  return { lower: at((1 - level) / 2), upper: at((1 + level) / 2) }
}
