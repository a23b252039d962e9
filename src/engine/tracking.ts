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
 * |TS| > 4 flags a forecast that is persistently biased; the threshold is common
 * practice (values between 4 and 6 are in use), not a statistical test. TS is 0
 * when every deviation is 0. Over n deviations |TS| <= n, so with fewer than
 * `minPeriods` scored periods a SKU is never flagged.
 */
import { EngineInputError } from './errors.js'
import { sum } from './numeric.js'

export const TRACKING_SIGNAL_LIMIT = 4

export interface ScoredPeriod {
  readonly period: string
  readonly forecastDemand: number
  readonly actualDemand: number
}

export interface AccuracySummary {
  /** Periods scored. */
  readonly scoredPeriods: number
  readonly mae: number | null
  readonly bias: number | null
  readonly mape: number | null
  readonly trackingSignal: number | null
  /** |trackingSignal| > trackingLimit with at least minPeriods periods. */
  readonly flagged: boolean
  readonly trackingLimit: number
}

export interface TrackingOptions {
  readonly trackingLimit?: number
  /** Fewest scored periods before a SKU can be flagged. Default 4 (|TS| cannot exceed n). */
  readonly minPeriods?: number
}

/**
 * @throws EngineInputError ('non-finite-value') when a forecast or actual is not finite.
 */
export function summariseAccuracy(periods: readonly ScoredPeriod[], options: TrackingOptions = {}): AccuracySummary {
  const trackingLimit = options.trackingLimit ?? TRACKING_SIGNAL_LIMIT
  const minPeriods = options.minPeriods ?? 4
  const n = periods.length
  if (n === 0) return { scoredPeriods: 0, mae: null, bias: null, mape: null, trackingSignal: null, flagged: false, trackingLimit }
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
  return {
    scoredPeriods: n,
    mae,
    bias: sumError / n,
    mape: ape.length > 0 ? (100 * sum(ape)) / ape.length : null,
    trackingSignal,
    flagged: n >= minPeriods && Math.abs(trackingSignal) > trackingLimit,
    trackingLimit,
  }
}
