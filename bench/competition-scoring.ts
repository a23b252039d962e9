/**
 * Scoring of the competition benchmark, written to bench/data/m3/PROTOCOL.md and apart
 * from the engine's own metrics (the benchmark must not grade the engine with its code).
 *
 * Per series (y = actuals, f = point forecast, [L, U] an interval, h = y.length):
 *   scale = mean over t >= L of |x_t - x_{t-L}| on the training part, L = m, except
 *           L = 1 when m = 1 or the training part is shorter than 2m + 1 values;
 *   sMAPE = (200/h) sum |y - f| / (|y| + |f|)  (a 0/0 term counts 0);
 *   MASE  = (1/h) sum |y - f| / scale;
 *   MSIS  = (1/h) sum [(U - L) + (2/a)(L - y)1{y < L} + (2/a)(y - U)1{y > U}] / scale, a = 0.05
 *           (the M4 competition's interval score);
 *   cov80, cov95 = share of actuals inside the 80% / 95% interval (bounds included).
 * Aggregates are plain means over series; OWA = 0.5 (sMAPE / sMAPE of Naive2 + MASE / MASE
 * of Naive2) on the same series (M4 competition).
 */

export interface Forecast {
  readonly point: readonly number[]
  readonly lower80: readonly number[]
  readonly upper80: readonly number[]
  readonly lower95: readonly number[]
  readonly upper95: readonly number[]
}

export interface SeriesScore {
  readonly smape: number
  readonly mase: number
  readonly msis: number
  readonly cov80: number
  readonly cov95: number
}

export const SCORE_NAMES = ['smape', 'mase', 'msis', 'cov80', 'cov95'] as const

/** The protocol's MASE/MSIS scale of a training part. */
export function protocolScale(train: readonly number[], seasonLength: number): number {
  const lag = seasonLength > 1 && train.length >= 2 * seasonLength + 1 ? seasonLength : 1
  let sum = 0
  for (let t = lag; t < train.length; t++) sum += Math.abs(train[t]! - train[t - lag]!)
  return sum / (train.length - lag)
}

function intervalScore(y: number, lower: number, upper: number, alpha: number): number {
  let s = upper - lower
  if (y < lower) s += (2 / alpha) * (lower - y)
  if (y > upper) s += (2 / alpha) * (y - upper)
  return s
}

export function scoreSeries(train: readonly number[], test: readonly number[], seasonLength: number, f: Forecast): SeriesScore {
  const h = test.length
  const scale = protocolScale(train, seasonLength)
  let smape = 0
  let absError = 0
  let msis = 0
  let in80 = 0
  let in95 = 0
  for (let k = 0; k < h; k++) {
    const y = test[k]!
    const p = f.point[k]!
    const denominator = Math.abs(y) + Math.abs(p)
    smape += denominator === 0 ? 0 : (200 * Math.abs(y - p)) / denominator
    absError += Math.abs(y - p)
    msis += intervalScore(y, f.lower95[k]!, f.upper95[k]!, 0.05)
    if (y >= f.lower80[k]! && y <= f.upper80[k]!) in80++
    if (y >= f.lower95[k]! && y <= f.upper95[k]!) in95++
  }
  return { smape: smape / h, mase: absError / h / scale, msis: msis / h / scale, cov80: in80 / h, cov95: in95 / h }
}

export type Aggregate = Record<(typeof SCORE_NAMES)[number], number> & { n: number }

export function aggregate(scores: readonly SeriesScore[]): Aggregate {
  const out: Aggregate = { n: scores.length, smape: 0, mase: 0, msis: 0, cov80: 0, cov95: 0 }
  for (const s of scores) for (const k of SCORE_NAMES) out[k] += s[k]
  for (const k of SCORE_NAMES) out[k] = scores.length === 0 ? NaN : out[k] / scores.length
  return out
}

/** OWA of `method` against Naive2, both aggregated over the same series. */
export function owa(method: Aggregate, naive2: Aggregate): number {
  return 0.5 * (method.smape / naive2.smape + method.mase / naive2.mase)
}

/**
 * Percentile bootstrap interval of a statistic of paired per-series scores: whole series
 * are resampled with replacement (Efron and Tibshirani 1993, ch. 13, from memory), so the
 * interval shows how much the figure depends on which series happen to be in the set.
 */
export function bootstrapInterval(
  count: number,
  statistic: (indexes: readonly number[]) => number,
  level: number,
  resamples: number,
  random: () => number,
): { lower: number; upper: number } | null {
  if (count === 0) return null
  const values: number[] = []
  const indexes = new Array<number>(count)
  for (let r = 0; r < resamples; r++) {
    for (let i = 0; i < count; i++) indexes[i] = Math.min(count - 1, Math.floor(random() * count))
    const v = statistic(indexes)
    if (Number.isFinite(v)) values.push(v)
  }
  if (values.length === 0) return null
  values.sort((a, b) => a - b)
  const at = (p: number): number => values[Math.min(values.length - 1, Math.max(0, Math.floor(p * values.length)))]!
  return { lower: at((1 - level) / 2), upper: at((1 + level) / 2) }
}
