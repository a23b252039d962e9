/**
 * Replenishment figures from a forecast: lead-time demand, safety stock and
 * reorder point for a target cycle service level. Pure.
 *
 *   leadTimeDemand D_L = sum of the point forecasts for steps 1..L
 *   sigma_L           = sigma_1 · sqrt(L)
 *   z                 = standard normal quantile at the service level
 *   safetyStock       = z · sigma_L
 *   reorderPoint      = D_L + safetyStock
 *
 * sigma_1 is the root mean square of the model's in-sample one-step forecast
 * errors (the same spread the engine's empirical intervals start from). The
 * sqrt(L) rule is the classic textbook approximation (Silver, Pyke & Peterson,
 * "Inventory Management and Production Planning and Scheduling", 3rd ed.,
 * ch. 7; cited from memory): it assumes independent one-step errors and a fixed
 * lead time. Errors of smoothing models are correlated across steps (a level
 * error persists), so for trending or slowly adapting series sigma_L tends to
 * be understated; for an over-fitted model sigma_1 itself is optimistic. The
 * figures are estimates for a planner to review, never an order instruction.
 */
import { EngineInputError } from './errors.js'
import { normalQuantile } from './intervals.js'
import { sum } from './numeric.js'
import type { IntervalMethod } from './types.js'

/** Service levels accepted: (0.5, 0.9999). At 0.5 z is 0 and safety stock vanishes. */
export const SERVICE_LEVEL_MIN = 0.5
export const SERVICE_LEVEL_MAX = 0.9999

export const REPLENISHMENT_FORMULA = 'sigma1-sqrt-lead-time' as const

export interface ReplenishmentOptions {
  /** Lead time L in periods, integer, 1 <= L <= horizon. */
  readonly leadTimePeriods: number
  /** Target cycle service level: probability of no stock-out in a replenishment cycle. */
  readonly serviceLevel: number
}

export interface ReplenishmentFigures {
  readonly leadTimePeriods: number
  readonly serviceLevel: number
  readonly leadTimeDemand: number
  /** sigma_L, the standard deviation of lead-time demand error; null when it cannot be estimated. */
  readonly sigma: number | null
  readonly z: number
  readonly safetyStock: number | null
  readonly reorderPoint: number | null
  readonly formula: typeof REPLENISHMENT_FORMULA
}

/**
 * @throws EngineInputError ('invalid-option') when the lead time is not an integer in
 * 1..horizon or the service level is outside (0.5, 0.9999).
 */
export function checkReplenishmentOptions(options: ReplenishmentOptions, horizon: number): void {
  const { leadTimePeriods, serviceLevel } = options
  if (!Number.isInteger(leadTimePeriods) || leadTimePeriods < 1) {
    throw new EngineInputError('invalid-option', 'leadTimePeriods must be a whole number of periods >= 1', 'replenishment.leadTimePeriods')
  }
  if (leadTimePeriods > horizon) {
    throw new EngineInputError(
      'invalid-option',
      `leadTimePeriods (${leadTimePeriods}) must not exceed the horizon (${horizon}): lead-time demand needs a forecast for every period of the lead time`,
      'replenishment.leadTimePeriods',
    )
  }
  if (!(serviceLevel > SERVICE_LEVEL_MIN && serviceLevel < SERVICE_LEVEL_MAX)) {
    throw new EngineInputError(
      'invalid-option',
      `serviceLevel must be in (${SERVICE_LEVEL_MIN}, ${SERVICE_LEVEL_MAX})`,
      'replenishment.serviceLevel',
    )
  }
}

/**
 * Root mean square of the one-step residuals from their summary
 * (mean m, sample sd s with n - 1 in the denominator, count n):
 * RMS^2 = m^2 + s^2 (n - 1) / n. Null with fewer than 2 residuals.
 */
export function oneStepRms(residuals: { readonly count: number; readonly mean: number; readonly sd: number }): number | null {
  const { count, mean, sd } = residuals
  if (!(count >= 2) || !Number.isFinite(mean) || !Number.isFinite(sd)) return null
  const rms = Math.sqrt(mean * mean + (sd * sd * (count - 1)) / count)
  return Number.isFinite(rms) ? rms : null
}

/**
 * Figures for one SKU from its point forecasts (steps 1..horizon) and the
 * one-step error spread sigma_1 (null: unknown, then only lead-time demand is given).
 * @throws EngineInputError on invalid options (see checkReplenishmentOptions) or non-finite forecasts.
 */
export function computeReplenishment(
  point: readonly number[],
  sigmaOneStep: number | null,
  options: ReplenishmentOptions,
): ReplenishmentFigures {
  checkReplenishmentOptions(options, point.length)
  const { leadTimePeriods, serviceLevel } = options
  const leadTimeDemand = sum(point, 0, leadTimePeriods)
  if (!Number.isFinite(leadTimeDemand)) {
    throw new EngineInputError('non-finite-value', 'lead-time demand is not finite', 'forecast')
  }
  const z = normalQuantile(serviceLevel)
  const known = sigmaOneStep !== null && Number.isFinite(sigmaOneStep) && sigmaOneStep >= 0
  const sigma = known ? sigmaOneStep * Math.sqrt(leadTimePeriods) : null
  const safetyStock = sigma === null ? null : z * sigma
  return {
    leadTimePeriods,
    serviceLevel,
    leadTimeDemand,
    sigma,
    z,
    safetyStock,
    reorderPoint: safetyStock === null ? null : leadTimeDemand + safetyStock,
    formula: REPLENISHMENT_FORMULA,
  }
}

/**
 * Figures for an engine result: its point forecasts and the RMS of its one-step
 * residuals. When the engine gave no intervals (a constant history, or too few
 * residuals) the spread is unknown: a flat past is no evidence of a certain
 * future, so sigma, safety stock and reorder point are null rather than 0.
 */
export function replenishmentFor(
  result: {
    readonly forecast: readonly { readonly demand: number }[]
    readonly residuals: { readonly count: number; readonly mean: number; readonly sd: number }
    readonly intervalMethod?: IntervalMethod
  },
  options: ReplenishmentOptions,
): ReplenishmentFigures {
  return computeReplenishment(
    result.forecast.map((p) => p.demand),
    result.intervalMethod === 'none' ? null : oneStepRms(result.residuals),
    options,
  )
}
