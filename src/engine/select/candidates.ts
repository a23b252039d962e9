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

export const INTERMITTENT_MODELS: readonly ModelName[] = ['croston', 'sba']

/** Minimum training length of a model for this season length. */
export function requiredLength(spec: ModelSpec, seasonLength: number): number {
  const own = spec.minLength(seasonLength)
  return spec.seasonal ? Math.max(own, 2 * seasonLength) : own
}

/** Reason the model cannot be fitted whatever the length, or null. */
export function structuralReason(spec: ModelSpec, seasonLength: number, values: readonly number[]): string | null {
  if (spec.seasonal && seasonLength < 2) return `${spec.name} needs seasonLength >= 2`
  if (spec.requiresPositive && values.some((v) => !(v > 0))) return `${spec.name} needs positive data`
  return null
}

/** Reason the training part is too short, or null. */
export function lengthReason(spec: ModelSpec, seasonLength: number, trainLength: number, holdout: boolean): string | null {
  const need = requiredLength(spec, seasonLength)
  if (trainLength >= need) return null
  return holdout
    ? `${spec.name} requires at least ${need} data points in the training part (${trainLength} available)`
    : `${spec.name} requires at least ${need} data points`
}

export interface CandidateSet {
  readonly specs: readonly ModelSpec[]
  /** Requested models this build does not provide. */
  readonly unavailable: readonly ModelName[]
}

/**
 * The requested models, or by default every registered model except the
 * intermittent-demand ones, which join only when `intermittent` is true.
 */
export function candidateModels(
  registry: readonly ModelSpec[],
  requested: readonly ModelName[] | undefined,
  intermittent: boolean,
): CandidateSet {
  if (requested === undefined) {
    const specs = registry.filter((s) => intermittent || !INTERMITTENT_MODELS.includes(s.name))
    return { specs, unavailable: [] }
  }
  const specs = registry.filter((s) => requested.includes(s.name))
  const unavailable = requested.filter((name) => !registry.some((s) => s.name === name))
  return { specs, unavailable }
}
