/**
 * Realised forecast accuracy of one SKU: errors of earlier forecasts against
 * the actuals that arrived later. Pure.
 *
 * Sign convention: deviation e = actual − forecast. A positive bias means demand
 * came in above the forecast (under-forecasting).
 *
 *   MAE   = mean |e|
 *   bias  = mean e
 *   MAPE  = 100 · mean |e| / |actual| over periods with a non-zero actual (null if none)
 *   tracking signal TS = sum e / MAE   (cumulative deviation over mean absolute deviation)
 *
 * Over n deviations |TS| <= n, with equality exactly when every deviation has
 * the same sign. So the rule is |TS| >= trackingLimit with at least
 * ceil(trackingLimit) periods scored: at the fewest periods allowed it fires
 * when every forecast erred the same way (a rule of "> limit" with n >= limit
 * could never fire at n = limit). The limit 4 is common practice (values
 * between 4 and 6 are in use), not a statistical test.
 *
 * Smoothed tracking signal (Trigg, D. W. 1964, "Monitoring a forecasting
 * system", Operational Research Quarterly 15(3), 271-274; cited from memory):
 *
 *   E[t] = w · e[t] + (1 − w) · E[t−1]        smoothed error
 *   M[t] = w · |e[t]| + (1 − w) · M[t−1]      smoothed absolute error
 *   T[t] = E[t] / M[t]                         always within [−1, 1]
 *
 * with E[0] = M[0] = 0 (no prior), so T is ±1 after one deviation; the same
 * minimum of scored periods applies before it can flag. Its limit is Trigg's
 * large-sample approximation for unbiased, normal, independent errors:
 * sd(E) = σ·√(w / (2 − w)) and M → σ·√(2/π), so T is flagged beyond
 * z · √(w / (2 − w)) / √(2/π) with z = 1.96 (about 5 % false alarms per period
 * once settled): 0.5636 for the common-practice weight w = 0.1.
 */
import { EngineInputError } from './errors.js'
import { sum } from './numeric.js'

export const TRACKING_SIGNAL_LIMIT = 4
/** Weight of the newest deviation in the smoothed tracking signal (common practice: 0.1). */
export const TRACKING_SMOOTHING_WEIGHT = 0.1
/** Standard normal quantile for the smoothed signal's two-sided 95 % limit. */
const Z_95 = 1.959963984540054

export interface ScoredPeriod {
  readonly period: string
  readonly forecastDemand: number
  readonly actualDemand: number
}

/** Which rules put a SKU on the exception list. */
export type TrackingFlag = 'tracking-signal' | 'smoothed-tracking-signal'

export interface AccuracySummary {
  /** Periods scored. */
  readonly scoredPeriods: number
  readonly mae: number | null
  readonly bias: number | null
  readonly mape: number | null
  readonly trackingSignal: number | null
  /** Trigg's smoothed signal T, in [−1, 1]; null before any period is scored. */
  readonly smoothedTrackingSignal: number | null
  /** true when flaggedBy is not empty. */
  readonly flagged: boolean
  /** The rules that fired, each with at least ceil(trackingLimit) periods scored. */
  readonly flaggedBy: TrackingFlag[]
  readonly trackingLimit: number
  readonly smoothedTrackingLimit: number
}

export interface TrackingOptions {
  readonly trackingLimit?: number
  /** Weight w of the smoothed signal, in (0, 1). Default TRACKING_SMOOTHING_WEIGHT. */
  readonly smoothingWeight?: number
}

/**
 * The smoothed signal's limit for weight w (see the module comment).
 * @throws EngineInputError ('invalid-option') unless 0 < w < 1.
 */
export function smoothedTrackingLimit(smoothingWeight: number): number {
  if (!(smoothingWeight > 0 && smoothingWeight < 1)) {
    throw new EngineInputError('invalid-option', `smoothingWeight must be in (0, 1), got ${smoothingWeight}`, 'smoothingWeight')
  }
  return (Z_95 * Math.sqrt(smoothingWeight / (2 - smoothingWeight))) / Math.sqrt(2 / Math.PI)
}

/** Fewest scored periods before a SKU can be flagged: the limit, rounded up (|TS| <= n). */
export function minScoredPeriods(trackingLimit: number): number {
  return Math.max(1, Math.ceil(trackingLimit))
}

/**
 * Trigg's smoothed tracking signal after each deviation (E[0] = M[0] = 0);
 * 0 while every deviation so far is 0.
 */
export function smoothedTrackingSignals(deviations: readonly number[], smoothingWeight = TRACKING_SMOOTHING_WEIGHT): number[] {
  smoothedTrackingLimit(smoothingWeight) // validates the weight
  let smoothedError = 0
  let smoothedAbsolute = 0
  return deviations.map((e) => {
    smoothedError = smoothingWeight * e + (1 - smoothingWeight) * smoothedError
    smoothedAbsolute = smoothingWeight * Math.abs(e) + (1 - smoothingWeight) * smoothedAbsolute
    return smoothedAbsolute > 0 ? smoothedError / smoothedAbsolute : 0
  })
}

/**
 * Periods in the order they occurred (oldest first: the smoothed signal depends on it).
 * @throws EngineInputError ('non-finite-value') when a forecast or actual is not finite.
 */
export function summariseAccuracy(periods: readonly ScoredPeriod[], options: TrackingOptions = {}): AccuracySummary {
  const trackingLimit = options.trackingLimit ?? TRACKING_SIGNAL_LIMIT
  const weight = options.smoothingWeight ?? TRACKING_SMOOTHING_WEIGHT
  const smoothedLimit = smoothedTrackingLimit(weight)
  const n = periods.length
  const none = { scoredPeriods: 0, mae: null, bias: null, mape: null, trackingSignal: null, smoothedTrackingSignal: null }
  if (n === 0) return { ...none, flagged: false, flaggedBy: [], trackingLimit, smoothedTrackingLimit: smoothedLimit }
  const errors: number[] = []
  const ape: number[] = []
  periods.forEach((p, i) => {
    if (!Number.isFinite(p.actualDemand) || !Number.isFinite(p.forecastDemand)) {
      throw new EngineInputError('non-finite-value', `period ${p.period} has a non-finite actual or forecast demand`, `periods[${i}]`)
    }
    const e = p.actualDemand - p.forecastDemand
    errors.push(e)
    if (p.actualDemand !== 0) ape.push(Math.abs(e) / Math.abs(p.actualDemand))
  })
  const sumError = sum(errors)
  const mae = sum(errors.map(Math.abs)) / n
  const trackingSignal = mae > 0 ? sumError / mae : 0
  const smoothed = smoothedTrackingSignals(errors, weight).at(-1)!
  const flaggedBy: TrackingFlag[] = []
  if (n >= minScoredPeriods(trackingLimit)) {
    // A relative tolerance: |TS| = n exactly in exact arithmetic, but the sums may round just below it.
    if (Math.abs(trackingSignal) >= trackingLimit * (1 - 1e-12)) flaggedBy.push('tracking-signal')
    if (Math.abs(smoothed) > smoothedLimit) flaggedBy.push('smoothed-tracking-signal')
  }
  return {
    scoredPeriods: n,
    mae,
    bias: sumError / n,
    mape: ape.length > 0 ? (100 * sum(ape)) / ape.length : null,
    trackingSignal,
    smoothedTrackingSignal: smoothed,
    flagged: flaggedBy.length > 0,
    flaggedBy,
    trackingLimit,
    smoothedTrackingLimit: smoothedLimit,
  }
}

/** Accuracy pooled over many SKUs (a tag): errors of every scored period of every SKU together. */
export interface PooledAccuracy {
  /** SKUs with at least one scored period. */
  readonly skus: number
  readonly scoredPeriods: number
  readonly mae: number | null
  readonly bias: number | null
  /** Weighted absolute percentage error, percent: 100 · sum |e| / sum |actual|; null when every actual is 0. */
  readonly wape: number | null
  /** SKUs whose own summary is flagged. */
  readonly flaggedSkus: number
}

/**
 * Pools the scored periods of many SKUs. A tracking signal over several SKUs
 * means nothing, so only the count of flagged SKUs is given.
 */
export function poolAccuracy(perSku: readonly (readonly ScoredPeriod[])[], options: TrackingOptions = {}): PooledAccuracy {
  const abs: number[] = []
  const dev: number[] = []
  const actual: number[] = []
  let skus = 0
  let flaggedSkus = 0
  for (const periods of perSku) {
    if (periods.length === 0) continue
    skus++
    if (summariseAccuracy(periods, options).flagged) flaggedSkus++
    for (const p of periods) {
      const e = p.actualDemand - p.forecastDemand
      dev.push(e)
      abs.push(Math.abs(e))
      actual.push(Math.abs(p.actualDemand))
    }
  }
  const n = dev.length
  const totalActual = sum(actual)
  return {
    skus,
    scoredPeriods: n,
    mae: n > 0 ? sum(abs) / n : null,
    bias: n > 0 ? sum(dev) / n : null,
    wape: n > 0 && totalActual > 0 ? (100 * sum(abs)) / totalActual : null,
    flaggedSkus,
  }
}

/** One published forecast as lag pairing reads it: its run and point forecast per period ordinal. */
export interface IssuedForecast {
  readonly runId: string
  readonly points: ReadonlyMap<number, number>
}

export interface LaggedPair {
  /** Period ordinal forecast. */
  readonly ordinal: number
  readonly runId: string
  readonly forecastDemand: number
  readonly actualDemand: number
}

/**
 * Forecast/actual pairs at a fixed lag k: from each forecast, the point for the
 * period k periods after its origin (the last period of the history it was
 * fitted on, i.e. one before its first point), so lag 1 is the one-step-ahead
 * forecast. Forecasts newest first: of two with the same origin the first wins.
 * `actual(ordinal)` gives the scorable actual of a period or null (missing,
 * open or not yet arrived). Pairs oldest period first.
 * @throws EngineInputError ('invalid-option') unless lag is a whole number >= 1.
 */
export function pairsAtLag(
  forecasts: readonly IssuedForecast[],
  actual: (ordinal: number) => number | null,
  lag: number,
): LaggedPair[] {
  if (!Number.isInteger(lag) || lag < 1) throw new EngineInputError('invalid-option', `lag must be a whole number >= 1, got ${lag}`, 'lag')
  const byOrigin = new Map<number, LaggedPair>()
  for (const f of forecasts) {
    if (f.points.size === 0) continue
    const origin = Math.min(...f.points.keys()) - 1
    if (byOrigin.has(origin)) continue
    const target = origin + lag
    const forecastDemand = f.points.get(target)
    const actualDemand = actual(target)
    if (forecastDemand === undefined || actualDemand === null) continue
    byOrigin.set(origin, { ordinal: target, runId: f.runId, forecastDemand, actualDemand })
  }
  return [...byOrigin.values()].sort((a, b) => a.ordinal - b.ordinal)
}
