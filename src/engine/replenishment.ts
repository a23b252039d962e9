/**
 * Replenishment figures from a forecast: demand over the protection interval,
 * safety stock, reorder point (order-up-to level under periodic review) and an
 * order quantity rounded to packs. Pure.
 *
 * Symbols (periods of the forecast's frequency; L and R may be fractional):
 *   L  leadTimePeriods, R reviewPeriods (0: continuous review), c = L + R the protection interval
 *   w_h weight of step h in the interval: 1 for whole steps, the fraction for the last part-step
 *       (demand is taken as spread evenly within a period: common practice)
 *   D_c = sum_h w_h · yhat_h                (coverDemand; leadTimeDemand is the same over L)
 *   V_c = sum_h w_h · sd_h^2                (the forecast's own h-step error variances, summed)
 *   d   = D_c / c                           (mean demand per period over the interval)
 *   sigma = sqrt(V_c + d^2 · sigma_LT^2)     (sigma_LT: lead-time standard deviation in periods)
 *   safetyStock = ceil(z · sigma), reorderPoint = ceil(D_c + z · sigma), z = Phi^-1(serviceLevel)
 *
 * sigma is the standard formula for demand over a variable lead time,
 * sigma = sqrt(E[L] · sigma_d^2 + d^2 · sigma_L^2) (Silver, Pyke & Peterson,
 * "Inventory Management and Production Planning and Scheduling", 3rd ed. 1998,
 * section 7.12; cited from memory), with E[L] · sigma_d^2 replaced by the
 * forecast's own error variances over the interval; under periodic review the
 * protection interval is R + L (same book, the (R, S) system). Summing the
 * step variances treats the step errors as uncorrelated; for smoothing models
 * they are positively correlated, so sigma is, if anything, understated.
 * Rounding: safety stock and reorder point up to whole units (rounded once, at
 * the end); the order quantity (demand over max(R, 1) periods) raised to the
 * minimum order, then up to a whole number of packs. The figures are estimates
 * for a planner to review, never an order instruction.
 *
 * `periods`: the same figures for an order placed at the start of each forecast
 * period t (interval t .. t + c - 1), as far as the horizon reaches, so seasonal
 * items show their peaks. Later rows use the larger variances of steps further
 * out: they are what is known today and narrow when the forecast is remade.
 */
import { EngineInputError } from './errors.js'
import { normalQuantile } from './intervals.js'
import type { IntervalMethod } from './types.js'

/** Service levels accepted: (0.5, 0.9999). At 0.5 z is 0 and safety stock vanishes. */
export const SERVICE_LEVEL_MIN = 0.5
export const SERVICE_LEVEL_MAX = 0.9999

export const REPLENISHMENT_FORMULA = 'summed-step-variance' as const

/** A SKU's stock policy, every duration in periods of its forecast's frequency. */
export interface ReplenishmentOptions {
  /** Lead time L, > 0 (fractional allowed: converted from days). */
  readonly leadTimePeriods: number
  /** Target cycle service level: probability of no stock-out in a replenishment cycle. */
  readonly serviceLevel: number
  /** Review period R, >= 0 (0: continuous review). Default 0. */
  readonly reviewPeriods?: number
  /** Standard deviation of the lead time, >= 0. Default 0 (a fixed lead time). */
  readonly leadTimeSdPeriods?: number
  /** Smallest order in units, >= 0. Default 0. */
  readonly minimumOrder?: number
  /** Units per pack, > 0; orders are whole packs. Default 1. */
  readonly packSize?: number
}

/** The figures for an order placed at the start of one forecast period. */
export interface ReplenishmentPeriod {
  readonly period: string
  readonly coverDemand: number
  readonly sigma: number | null
  readonly safetyStock: number | null
  readonly reorderPoint: number | null
}

export interface ReplenishmentFigures {
  readonly leadTimePeriods: number
  readonly reviewPeriods: number
  readonly leadTimeSdPeriods: number
  readonly serviceLevel: number
  readonly minimumOrder: number
  readonly packSize: number
  /** Forecast demand over the lead time. */
  readonly leadTimeDemand: number
  /** Forecast demand over the protection interval L + R. */
  readonly coverDemand: number
  /** Standard deviation of the demand over L + R around its forecast; null when it cannot be estimated. */
  readonly sigma: number | null
  readonly z: number
  /** Whole units. */
  readonly safetyStock: number | null
  /** Whole units: the reorder point (R = 0) or order-up-to level (R > 0). */
  readonly reorderPoint: number | null
  /** Whole packs, at least the minimum order. */
  readonly orderQuantity: number
  readonly formula: typeof REPLENISHMENT_FORMULA
  readonly periods: readonly ReplenishmentPeriod[]
}

/**
 * @throws EngineInputError ('invalid-option') when a duration is out of range, the protection
 * interval does not fit the horizon, or the service level is outside (0.5, 0.9999).
 */
export function checkReplenishmentOptions(options: ReplenishmentOptions, horizon: number): void {
  const { leadTimePeriods, serviceLevel } = options
  const review = options.reviewPeriods ?? 0
  const bad = (field: string, message: string) => new EngineInputError('invalid-option', message, `replenishment.${field}`)
  if (!(Number.isFinite(leadTimePeriods) && leadTimePeriods > 0)) throw bad('leadTimePeriods', 'leadTimePeriods must be a number of periods > 0')
  if (!(Number.isFinite(review) && review >= 0)) throw bad('reviewPeriods', 'reviewPeriods must be a number of periods >= 0')
  const sdLt = options.leadTimeSdPeriods ?? 0
  if (!(Number.isFinite(sdLt) && sdLt >= 0)) throw bad('leadTimeSdPeriods', 'leadTimeSdPeriods must be >= 0')
  const cover = Math.ceil(roundNoise(leadTimePeriods + review))
  if (cover > horizon) {
    throw bad(
      'leadTimePeriods',
      `lead time plus review period (${round6(leadTimePeriods + review)} periods) must not exceed the horizon (${horizon}): the demand over them needs a forecast for every period`,
    )
  }
  if (!(serviceLevel > SERVICE_LEVEL_MIN && serviceLevel < SERVICE_LEVEL_MAX)) {
    throw bad('serviceLevel', `serviceLevel must be in (${SERVICE_LEVEL_MIN}, ${SERVICE_LEVEL_MAX})`)
  }
  const moq = options.minimumOrder ?? 0
  if (!(Number.isFinite(moq) && moq >= 0)) throw bad('minimumOrder', 'minimumOrder must be >= 0')
  const pack = options.packSize ?? 1
  if (!(Number.isFinite(pack) && pack > 0)) throw bad('packSize', 'packSize must be > 0')
}

/**
 * Figures for one SKU from its forecast points (steps 1..horizon) and the forecast
 * error's standard deviation per step (null: unknown, then only demands and the
 * order quantity are given).
 * @throws EngineInputError on invalid options (see checkReplenishmentOptions) or non-finite forecasts.
 */
export function computeReplenishment(
  points: readonly { readonly period: string; readonly demand: number }[],
  stepSd: readonly number[] | null,
  options: ReplenishmentOptions,
): ReplenishmentFigures {
  checkReplenishmentOptions(options, points.length)
  const L = options.leadTimePeriods
  const R = options.reviewPeriods ?? 0
  const sdLt = options.leadTimeSdPeriods ?? 0
  const minimumOrder = options.minimumOrder ?? 0
  const packSize = options.packSize ?? 1
  const demand = points.map((p) => p.demand)
  if (!demand.every(Number.isFinite)) throw new EngineInputError('non-finite-value', 'the forecast is not finite', 'forecast')
  const known = stepSd !== null && stepSd.length >= points.length && stepSd.every((s) => Number.isFinite(s) && s >= 0)
  const variance = known ? stepSd.map((s) => s * s) : null
  const z = normalQuantile(options.serviceLevel)
  const cover = L + R
  const span = Math.ceil(roundNoise(cover))

  const window = (start: number) => {
    const coverDemand = weightedSum(demand, start, cover)
    if (variance === null) return { coverDemand, sigma: null, safetyStock: null, reorderPoint: null }
    const d = coverDemand / cover
    const sigma = Math.sqrt(weightedSum(variance, start, cover) + d * d * sdLt * sdLt)
    return { coverDemand, sigma, safetyStock: ceilUnits(z * sigma), reorderPoint: ceilUnits(coverDemand + z * sigma) }
  }

  const first = window(0)
  const periods: ReplenishmentPeriod[] = []
  for (let t = 0; t + span <= points.length; t++) periods.push({ period: points[t]!.period, ...window(t) })
  const cycle = weightedSum(demand, 0, Math.min(Math.max(R, 1), points.length))
  const packs = Math.ceil(roundNoise(Math.max(cycle, minimumOrder, 0) / packSize))
  return {
    leadTimePeriods: L,
    reviewPeriods: R,
    leadTimeSdPeriods: sdLt,
    serviceLevel: options.serviceLevel,
    minimumOrder,
    packSize,
    leadTimeDemand: weightedSum(demand, 0, L),
    coverDemand: first.coverDemand,
    sigma: first.sigma,
    z,
    safetyStock: first.safetyStock,
    reorderPoint: first.reorderPoint,
    orderQuantity: packs * packSize,
    formula: REPLENISHMENT_FORMULA,
    periods,
  }
}

/**
 * Figures for an engine result: its forecast points and its per-step error
 * spread. When the engine gave no intervals (a constant history, or too few
 * residuals) the spread is unknown: a flat past is no evidence of a certain
 * future, so sigma, safety stock and reorder point are null rather than 0.
 */
export function replenishmentFor(
  result: {
    readonly forecast: readonly { readonly period: string; readonly demand: number }[]
    readonly stepSd: readonly number[]
    readonly intervalMethod: IntervalMethod
  },
  options: ReplenishmentOptions,
): ReplenishmentFigures {
  return computeReplenishment(result.forecast, result.intervalMethod === 'none' ? null : result.stepSd, options)
}

/** sum over steps start+1 .. start+length of values, the last part-step weighted by its fraction. */
function weightedSum(values: readonly number[], start: number, length: number): number {
  const whole = Math.floor(roundNoise(length))
  const part = roundNoise(length) - whole
  let total = 0
  for (let i = 0; i < whole; i++) total += values[start + i]!
  if (part > 0) total += part * values[start + whole]!
  return total
}

/** Rounds away binary noise (e.g. 0.1 + 0.2) so that ceil does not add a unit for it. */
function roundNoise(x: number): number {
  return Number(x.toPrecision(12))
}

/** Up to a whole unit. */
function ceilUnits(x: number): number {
  return Math.ceil(roundNoise(x))
}

function round6(x: number): number {
  return Number(x.toFixed(6))
}
