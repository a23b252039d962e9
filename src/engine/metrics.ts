/**
 * Forecast error measures. Error e[t] = actual[t] - forecast[t].
 *
 *  - mae   mean |e|
 *  - rmse  sqrt(mean e^2)
 *  - mape  100 * mean(|e| / |actual|) over the periods with a non-zero actual;
 *          null when every actual is zero (our choice: zero-demand periods are skipped
 *          rather than making the whole measure undefined, which intermittent demand
 *          would otherwise always do)
 *  - smape 100 * mean(2|e| / (|actual| + |forecast|)), in 0..200; a 0/0 term counts as 0
 *  - mase  mae / scale, scale = mean |y[t] - y[t-m]| over the in-sample (training) data
 *          with lag m = seasonLength, lag 1 when m = 1 or the training data has no more
 *          than m points (Hyndman & Koehler 2006, "Another look at measures of forecast
 *          accuracy", IJF 22(4), eq. for q_t); null when the scale is 0 or undefined
 *  - wape  100 * sum |e| / sum |actual| (percent, like mape); null when sum |actual| is 0
 *
 * Interval measures (intervalMetrics), from a normal spread sd[k] around the forecast:
 *  - msis     mean scaled interval score of the 95% interval [L, U] = f -/+ 1.96 sd:
 *             mean(U - L + (2/0.05)(L - y)1{y < L} + (2/0.05)(y - U)1{y > U}) / scale, with the
 *             MASE scale (the M4 competition's measure; Gneiting & Raftery 2007 for the
 *             interval score, from memory); null when the scale is undefined
 *  - pinball  mean quantile (pinball) loss over the quantiles PINBALL_QUANTILES, in demand
 *             units: loss_tau(y, q) = (y - q) tau if y >= q, else (q - y)(1 - tau)
 *             (Koenker & Bassett 1978, from memory)
 *
 * All sums are compensated (Neumaier, as numeric.sum, accumulated in one pass without
 * intermediate arrays). Pure.
 */
import { EngineInputError } from './errors.js'
import { normalQuantile } from './intervals.js'
import { METRIC_NAMES, type MetricName, type MetricSet } from './types.js'

/**
 * Neumaier-compensated running sums, two slots (sum, compensation) per sum: the same
 * additions in the same order as numeric.sum over an array, without building one.
 * Module scratch, used only inside one synchronous call at a time.
 */
const acc = new Float64Array(12)

function start(k: number): void {
  acc[2 * k] = 0
  acc[2 * k + 1] = 0
}

function add(k: number, v: number): void {
  const s = acc[2 * k]!
  const t = s + v
  if (Math.abs(s) >= Math.abs(v)) acc[2 * k + 1]! += s - t + v
  else acc[2 * k + 1]! += v - t + s
  acc[2 * k] = t
}

function total(k: number): number {
  return acc[2 * k]! + acc[2 * k + 1]!
}

/**
 * MASE scale: in-sample mean absolute difference at lag m (lag 1 when m <= 1 or
 * the series has no more than m points). Null when fewer than 2 points or the scale is 0.
 */
export function maseScale(inSample: readonly number[], seasonLength: number): number | null {
  const lag = seasonLength > 1 && inSample.length > seasonLength ? seasonLength : 1
  if (inSample.length <= lag) return null
  start(0)
  for (let t = lag; t < inSample.length; t++) add(0, Math.abs(inSample[t]! - inSample[t - lag]!))
  const scale = total(0) / (inSample.length - lag)
  return scale > 0 && Number.isFinite(scale) ? scale : null
}

/**
 * Every metric of `forecast` against `actual`.
 * @param inSample the data the forecast was made from (for the MASE scale)
 * @throws EngineInputError('invalid-option') if the lengths differ or are zero
 */
export function computeMetrics(
  actual: readonly number[],
  forecast: readonly number[],
  inSample: readonly number[],
  seasonLength: number,
): MetricSet {
  const n = actual.length
  if (n === 0 || forecast.length !== n) {
    throw new EngineInputError('invalid-option', `metrics need equal, non-zero lengths (got ${n} and ${forecast.length})`)
  }
  // Sums: 1 |e|, 2 e^2, 3 |actual|, 4 |e| / |actual| (non-zero actuals), 5 symmetric terms.
  for (let k = 1; k <= 5; k++) start(k)
  let pctCount = 0
  for (let t = 0; t < n; t++) {
    const e = actual[t]! - forecast[t]!
    const a = Math.abs(e)
    add(1, a)
    add(2, e * e)
    add(3, Math.abs(actual[t]!))
    if (actual[t] !== 0) {
      add(4, a / Math.abs(actual[t]!))
      pctCount++
    }
    const denom = Math.abs(actual[t]!) + Math.abs(forecast[t]!)
    add(5, denom === 0 ? 0 : (2 * a) / denom)
  }
  const sumAbs = total(1)
  const mae = sumAbs / n
  const rmse = Math.sqrt(total(2) / n)
  const sumAbsActual = total(3)
  const mape = pctCount > 0 ? (100 * total(4)) / pctCount : null
  const smape = (100 * total(5)) / n
  const scale = maseScale(inSample, seasonLength)
  return finite({
    mae,
    rmse,
    mape,
    smape,
    mase: scale === null ? null : mae / scale,
    wape: sumAbsActual > 0 ? (100 * sumAbs) / sumAbsActual : null,
  })
}

/** Any non-finite value (overflow on extreme input) becomes null: NaN never escapes. */
function finite(set: Record<MetricName, number | null>): MetricSet {
  for (const key of METRIC_NAMES) {
    const v = set[key]
    if (v !== null && !Number.isFinite(v)) set[key] = null
  }
  return set
}

/**
 * Mean of several metric sets, metric by metric, over the sets where it is defined;
 * null where it is defined in none.
 */
export function averageMetrics(sets: readonly MetricSet[]): MetricSet {
  const out = {} as Record<MetricName, number | null>
  for (const name of METRIC_NAMES) {
    start(0)
    let defined = 0
    for (const set of sets) {
      const v = set[name]
      if (v === null) continue
      add(0, v)
      defined++
    }
    out[name] = defined > 0 ? total(0) / defined : null
  }
  return out
}

/** The quantiles the pinball loss averages over: the bounds of the 80% and 95% intervals and the median. */
export const PINBALL_QUANTILES: readonly number[] = [0.025, 0.1, 0.5, 0.9, 0.975]
const Z_PINBALL = PINBALL_QUANTILES.map((tau) => normalQuantile(tau))
const Z_975 = normalQuantile(0.975)

/**
 * MSIS (95%) and mean pinball loss of `forecast` with normal spreads `sd` per step against
 * `actual` (module comment). Both null when no spread is known (sd missing or not finite).
 */
export function intervalMetrics(
  actual: readonly number[],
  forecast: readonly number[],
  sd: readonly number[] | null,
  inSample: readonly number[],
  seasonLength: number,
): { msis: number | null; pinball: number | null } {
  const n = actual.length
  if (!sd || sd.length < n || n === 0 || forecast.length !== n) return { msis: null, pinball: null }
  const scale = maseScale(inSample, seasonLength) // first: it uses accumulator 0 too
  start(0)
  start(1)
  for (let t = 0; t < n; t++) {
    const y = actual[t]!
    const f = forecast[t]!
    const s = sd[t]!
    if (!(s >= 0) || !Number.isFinite(s)) return { msis: null, pinball: null }
    const lo = f - Z_975 * s
    const hi = f + Z_975 * s
    add(0, hi - lo + (y < lo ? 40 * (lo - y) : 0) + (y > hi ? 40 * (y - hi) : 0))
    for (let j = 0; j < Z_PINBALL.length; j++) {
      const tau = PINBALL_QUANTILES[j]!
      const q = f + Z_PINBALL[j]! * s
      add(1, y >= q ? (y - q) * tau : (q - y) * (1 - tau))
    }
  }
  const msis = scale === null ? null : total(0) / n / scale
  const pinball = total(1) / (n * PINBALL_QUANTILES.length)
  return { msis: msis !== null && Number.isFinite(msis) ? msis : null, pinball: Number.isFinite(pinball) ? pinball : null }
}
