/**
 * Turning a fitted winner into a ForecastResult: labels, clamping, intervals,
 * residual summary. Also the flat result for constant and all-zero histories.
 */
import { buildIntervals } from '../intervals.js'
import { mean, sum } from '../numeric.js'
import { periodLabels } from '../periods.js'
import type { PreparedSeries } from '../prepare.js'
import type {
  EngineWarning,
  ForecastPoint,
  ForecastResult,
  LeaderboardEntry,
  MetricName,
  MetricSet,
  ModelFamily,
  ModelName,
  ModelParams,
} from '../types.js'

export interface Winner {
  readonly model: ModelName
  readonly family: ModelFamily
  readonly params: ModelParams
  /** In-sample one-step fitted values on the prepared history (NaN where undefined). */
  readonly fitted: readonly number[]
  readonly point: readonly number[]
  readonly variance?: readonly number[]
}

export interface SelectionSummary {
  readonly method: 'holdout' | 'in-sample' | 'none'
  readonly metric: MetricName
  readonly holdout: number
  readonly origins: number
  readonly metrics: MetricSet | null
  readonly leaderboard: readonly LeaderboardEntry[]
}

function residualSummary(values: readonly number[], fitted: readonly number[]): ForecastResult['residuals'] {
  const r: number[] = []
  fitted.forEach((f, t) => {
    if (Number.isFinite(f) && t < values.length) r.push(values[t] - f)
  })
  if (r.length === 0) return { count: 0, mean: 0, sd: 0, mae: 0 }
  const m = mean(r)
  const sd = r.length > 1 ? Math.sqrt(sum(r.map((e) => (e - m) ** 2)) / (r.length - 1)) : 0
  return { count: r.length, mean: m, sd, mae: mean(r.map(Math.abs)) }
}

export function assembleResult(
  prep: PreparedSeries,
  winner: Winner,
  selection: SelectionSummary,
  warningsIn: readonly EngineWarning[],
  constantHistory = false,
): ForecastResult {
  const warnings = [...warningsIn]
  const n = prep.values.length
  let point = winner.point.slice(0, prep.horizon)
  if (!prep.allowNegative && point.some((p) => p < 0)) {
    point = point.map((p) => Math.max(0, p))
    warnings.push({
      code: 'forecast-clamped',
      message: `${winner.model} forecast negative demand for some periods; those forecasts were raised to zero`,
    })
  }
  const residuals: number[] = []
  winner.fitted.forEach((f, t) => {
    if (Number.isFinite(f) && t < n) residuals.push(prep.values[t] - f)
  })
  const bounds = buildIntervals({
    point,
    levels: prep.levels,
    variance: winner.variance,
    residuals,
    allowNegative: prep.allowNegative,
    none: constantHistory,
  })
  if (bounds.clamped) {
    warnings.push({
      code: 'intervals-clamped',
      message: 'some lower interval bounds fell below zero and were raised to zero',
    })
  }
  if (bounds.method === 'none' && !constantHistory) {
    warnings.push({ code: 'no-intervals', message: 'too few residuals to estimate intervals; bounds equal the forecast' })
  }
  const labels = periodLabels(prep.frequency, prep.start, prep.horizon, prep.offset + n)
  const forecast: ForecastPoint[] = point.map((value, i) => {
    const lower: Record<string, number> = {}
    const upper: Record<string, number> = {}
    for (const level of prep.levels) {
      const key = String(level)
      lower[key] = bounds.lower[key][i]
      upper[key] = bounds.upper[key][i]
    }
    return { period: labels[i], value, lower, upper }
  })
  return {
    model: winner.model,
    family: winner.family,
    params: winner.params,
    selection: {
      method: selection.method,
      metric: selection.metric,
      holdout: selection.holdout,
      origins: selection.origins,
    },
    metrics: selection.metrics,
    fitted: prep.values.map((_, t) => {
      const f = winner.fitted[t]
      return f !== undefined && Number.isFinite(f) ? f : null
    }),
    residuals: residualSummary(prep.values, winner.fitted),
    forecast,
    intervals: { method: bounds.method, levels: prep.levels, clamped: bounds.clamped },
    leaderboard: selection.leaderboard,
    warnings,
    history: prep.history,
  }
}

/**
 * The naive method without selection: every forecast equals the last value, and the
 * one-step fitted value at t is y[t-1]. Used for constant histories (where every
 * candidate would give the same flat line) and as the last resort when no refit works.
 */
export function naiveWinner(values: readonly number[], horizon: number): Winner {
  const last = values[values.length - 1]
  return {
    model: 'naive',
    family: 'level',
    params: {},
    fitted: values.map((_, t) => (t === 0 ? NaN : values[t - 1])),
    point: new Array(horizon).fill(last),
  }
}
