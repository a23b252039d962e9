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
import type { ModelSearch, ModelSpec } from '../types.js'
import type { CalibrationBudget } from './calibrate.js'

/**
 * Models only the thorough search tries, after the default pool. Empty in this build:
 * every model the engine has is in the default pool already. Slower model families join
 * here (one line each) when they are too costly for the nightly default.
 */
export const THOROUGH_EXTRA: readonly ModelSpec[] = []

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
