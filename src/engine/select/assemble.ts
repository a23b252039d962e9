/**
 * Turning a fitted winner into a ForecastResult: labels, clamping, intervals,
 * residual summary. Also the flat result for constant and all-zero histories.
 */
import { buildIntervals } from '../intervals.js'
import type { CalibrationError } from './calibrate.js'
import { mean, sum } from '../numeric.js'
import { periodLabels } from '../periods.js'
import type { PreparedSeries } from '../prepare.js'
import type {
  Candidate,
  EngineWarning,
  ForecastPoint,
  ForecastResult,
  MetricName,
  MetricSet,
  ModelChoice,
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
  /** Residual degrees of freedom (residual count minus parameters), for t quantiles. */
  readonly degreesOfFreedom?: number
  /** Forecast errors at rolling origins inside the history (calibrate.ts). */
  readonly calibration?: readonly CalibrationError[]
  /** Lower bound of the spread per step (short histories). */
  readonly floor?: readonly number[]
}

export interface SelectionSummary {
  readonly method: 'holdout' | 'in-sample' | 'none'
  readonly rankBy: MetricName
  readonly holdoutPeriods: number
  readonly holdoutOrigins: number
  readonly holdoutErrors: MetricSet | null
  readonly candidates: readonly Candidate[]
  readonly members?: ModelChoice['members']
}

/** The one-step in-sample residuals, actual minus fitted, where the fit has a value. */
export function inSampleResiduals(values: readonly number[], fitted: readonly number[]): number[] {
  const residuals: number[] = []
  fitted.forEach((f, t) => {
    if (Number.isFinite(f) && t < values.length) residuals.push(values[t]! - f)
  })
  return residuals
}

function residualSummary(values: readonly number[], fitted: readonly number[]): ForecastResult['residuals'] {
  const r: number[] = []
  fitted.forEach((f, t) => {
    if (Number.isFinite(f) && t < values.length) r.push(values[t]! - f)
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
  if (!prep.allowNegativeDemand && point.some((p) => p < 0)) {
    point = point.map((p) => Math.max(0, p))
    warnings.push({
      code: 'forecast-raised-to-zero',
      message: `${winner.model} forecast negative demand for some periods; those forecasts were raised to zero`,
    })
  }
  const residuals = inSampleResiduals(prep.values, winner.fitted)
  const bounds = buildIntervals({
    point,
    levels: prep.levels,
    quantiles: prep.quantiles,
    variance: winner.variance,
    residuals,
    degreesOfFreedom: winner.degreesOfFreedom,
    calibration: winner.calibration,
    floor: winner.floor,
    allowNegative: prep.allowNegativeDemand,
    none: constantHistory,
  })
  if (bounds.clamped) {
    warnings.push({
      code: 'intervals-raised-to-zero',
      message: 'some lower interval bounds fell below zero and were raised to zero',
    })
  }
  if (bounds.method === 'none' && !constantHistory) {
    warnings.push({ code: 'no-intervals', message: 'too few residuals to estimate intervals; bounds equal the forecast' })
  }
  const labels = periodLabels(prep.frequency, prep.firstPeriod, prep.horizon, prep.offset + n)
  const forecast: ForecastPoint[] = point.map((demand, i) => {
    const intervals = prep.levels.map((level) => {
      const key = String(level)
      return { level, low: bounds.lower[key]![i]!, high: bounds.upper[key]![i]! }
    })
    if (prep.quantiles.length === 0) return { period: labels[i]!, demand, intervals }
    const quantiles = prep.quantiles.map((quantile) => ({ quantile, demand: bounds.quantiles[String(quantile)]![i]! }))
    return { period: labels[i]!, demand, intervals, quantiles }
  })
  return {
    model: winner.model,
    family: winner.family,
    params: winner.params,
    modelChoice: {
      method: selection.method,
      rankBy: selection.rankBy,
      holdoutPeriods: selection.holdoutPeriods,
      holdoutOrigins: selection.holdoutOrigins,
      ...(selection.members ? { members: selection.members } : {}),
    },
    holdoutErrors: selection.holdoutErrors,
    fitted: prep.values.map((_, t) => {
      const f = winner.fitted[t]
      return f !== undefined && Number.isFinite(f) ? f : null
    }),
    residuals: residualSummary(prep.values, winner.fitted),
    forecast,
    intervalMethod: bounds.method,
    stepSd: bounds.sd,
    candidates: selection.candidates,
    warnings,
    history: prep.history,
  }
}

/**
 * The last-value method without selection: every forecast equals the last value, and the
 * one-step fitted value at t is y[t-1]. Used for constant histories (where every
 * candidate would give the same flat line) and as the last resort when no refit works.
 */
export function naiveWinner(values: readonly number[], horizon: number): Winner {
  const last = values[values.length - 1]
  return {
    model: 'last-value',
    family: 'level',
    params: {},
    fitted: values.map((_, t) => (t === 0 ? NaN : values[t - 1]!)),
    point: new Array(horizon).fill(last),
  }
}
