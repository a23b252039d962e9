/**
 * What each model search (SeriesInput.modelSearch) tries, in one place.
 *
 * - fast (default): the registry's default pool, one holdout origin, five calibration
 *   fits of the winner (select/calibrate.ts); the interval measures of the holdout only
 *   for the chosen model.
 * - thorough: the default pool plus THOROUGH_EXTRA, at least three rolling holdout origins
 *   (more if the request sets more), up to 24 calibration fits over horizon + 12 origins,
 *   and the interval measures for every candidate. Costs and gains: bench/RESULTS.md
 *   (bench:competition --mode thorough).
 */
import { MODEL_REGISTRY } from '../models.js'
import { thoroughModels } from '../thorough-models.js'
import type { ModelSearch, ModelSpec } from '../types.js'
import type { CalibrationBudget } from './calibrate.js'

/**
 * Models only the thorough search tries, after the default pool: the state-space family,
 * the optimised Thetas and the median combination, which cost tens to hundreds of times a
 * default candidate (bench/RESULTS.md). auto-arima is left out of the search: on monthly
 * series one fit costs seconds; it is fitted when a request lists it in `models`.
 */
export const THOROUGH_EXTRA: readonly ModelSpec[] = thoroughModels.filter((spec) => spec.name !== 'auto-arima')

/** Every model a request may list in `models`, whatever its search. */
export const LISTABLE_MODELS: readonly ModelSpec[] = [...MODEL_REGISTRY, ...thoroughModels]

export interface SearchSettings {
  /** Fewest rolling holdout origins (a request may set more). */
  readonly holdoutOrigins: number
  readonly calibration: CalibrationBudget
  /** Interval measures (msis, pinball) for every candidate, not only the chosen one. */
  readonly intervalScoresForAll: boolean
}

export const SEARCH: Readonly<Record<ModelSearch, SearchSettings>> = {
  fast: { holdoutOrigins: 1, calibration: { extra: 2, maxFits: 5 }, intervalScoresForAll: false },
  thorough: { holdoutOrigins: 3, calibration: { extra: 12, maxFits: 24 }, intervalScoresForAll: true },
}
