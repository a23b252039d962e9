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
 *  - wape  sum |e| / sum |actual| (a ratio, not percent); null when sum |actual| is 0
 *
 * All sums are compensated (numeric.sum). Pure.
 */
import { EngineInputError } from './errors.js'
import { sum } from './numeric.js'
import { METRIC_NAMES, type MetricName, type MetricSet } from './types.js'

/**
 * MASE scale: in-sample mean absolute difference at lag m (lag 1 when m <= 1 or
 * the series has no more than m points). Null when fewer than 2 points or the scale is 0.
 */
export function maseScale(inSample: readonly number[], seasonLength: number): number | null {
  const lag = seasonLength > 1 && inSample.length > seasonLength ? seasonLength : 1
  if (inSample.length <= lag) return null
  const diffs: number[] = []
  for (let t = lag; t < inSample.length; t++) diffs.push(Math.abs(inSample[t] - inSample[t - lag]))
  const scale = sum(diffs) / diffs.length
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
  const absErr: number[] = []
  const sqErr: number[] = []
  const absAct: number[] = []
  const pctErr: number[] = []
  const symErr: number[] = []
  for (let t = 0; t < n; t++) {
    const e = actual[t] - forecast[t]
    const a = Math.abs(e)
    absErr.push(a)
    sqErr.push(e * e)
    absAct.push(Math.abs(actual[t]))
    if (actual[t] !== 0) pctErr.push(a / Math.abs(actual[t]))
    const denom = Math.abs(actual[t]) + Math.abs(forecast[t])
    symErr.push(denom === 0 ? 0 : (2 * a) / denom)
  }
  const mae = sum(absErr) / n
  const sumAbsActual = sum(absAct)
  const scale = maseScale(inSample, seasonLength)
  return finite({
    mae,
    rmse: Math.sqrt(sum(sqErr) / n),
    mape: pctErr.length > 0 ? (100 * sum(pctErr)) / pctErr.length : null,
    smape: (100 * sum(symErr)) / n,
    mase: scale === null ? null : mae / scale,
    wape: sumAbsActual > 0 ? sum(absErr) / sumAbsActual : null,
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
    const defined = sets.map((s) => s[name]).filter((v): v is number => v !== null)
    out[name] = defined.length > 0 ? sum(defined) / defined.length : null
  }
  return out
}
