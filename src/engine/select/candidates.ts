/**
 * Which models take part in selection, and whether each can be fitted on a given
 * training length. Eligibility rules:
 *  - a seasonal model needs seasonLength >= 2;
 *  - a model that requires positive data is skipped if any value is <= 0;
 *  - the training part must hold max(model minimum, 2 full seasons for seasonal models)
 *    points (two seasons: common practice, so seasonal states are estimated from more
 *    than one cycle).
 */
import type { ModelName, ModelSpec } from '../types.js'

export const INTERMITTENT_MODELS: readonly ModelName[] = ['croston', 'croston-bias-corrected']

/** Minimum training length of a model for this season length. */
export function requiredLength(spec: ModelSpec, seasonLength: number): number {
  const own = spec.minLength(seasonLength)
  return spec.seasonal ? Math.max(own, 2 * seasonLength) : own
}

/** Reason the model cannot be fitted whatever the length, or null. */
export function structuralReason(spec: ModelSpec, seasonLength: number, values: readonly number[]): string | null {
  if (spec.seasonal && seasonLength < 2) return 'needs a season length of at least 2'
  if (spec.requiresPositive && values.some((v) => !(v > 0))) return 'needs demand above zero in every period'
  return null
}

/**
 * Reason the training part is too short, or null. Reasons leave out the model id (a
 * candidate row names it): `needs 24 periods, has 20`.
 */
export function lengthReason(spec: ModelSpec, seasonLength: number, trainLength: number, holdout: boolean): string | null {
  const need = requiredLength(spec, seasonLength)
  if (trainLength >= need) return null
  return holdout ? `needs ${need} periods in the training part, has ${trainLength}` : `needs ${need} periods, has ${trainLength}`
}

export interface CandidateSet {
  readonly specs: readonly ModelSpec[]
  /** Requested models this build does not provide. */
  readonly unavailable: readonly ModelName[]
}

/**
 * The requested models; by default every registered model except the intermittent-demand
 * ones, or, when demand is intermittent, only those, and without the models marked
 * `defaultOnlyWithoutSeason` when the season length is above 1.
 *
 * Why only those: the demand categories of Syntetos, Boylan & Croston (2005) exist to pick
 * the method by category; and on intermittent demand the median period is often zero, so
 * absolute-error measures (MAE, MASE, WAPE) reward a forecast of zero on a short holdout
 * (from memory: Hyndman 2006, "Another look at forecast-accuracy metrics for intermittent
 * demand", Foresight 4). In our seeded trials with the whole pool, last-value (forecasting the
 * last zero) won most selections. Listing `models` overrides this.
 */
export function candidateModels(
  registry: readonly ModelSpec[],
  requested: readonly ModelName[] | undefined,
  intermittent: boolean,
  seasonLength: number,
): CandidateSet {
  if (requested === undefined) {
    const isIntermittent = (s: ModelSpec): boolean => INTERMITTENT_MODELS.includes(s.name)
    const specialised = registry.filter(isIntermittent)
    const pool = registry.filter((s) => !(s.defaultOnlyWithoutSeason === true && seasonLength > 1))
    const specs = intermittent && specialised.length > 0 ? specialised : pool.filter((s) => !isIntermittent(s))
    return { specs, unavailable: [] }
  }
  const specs = registry.filter((s) => requested.includes(s.name))
  const unavailable = requested.filter((name) => !registry.some((s) => s.name === name))
  return { specs, unavailable }
}
