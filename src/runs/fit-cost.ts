import { DEFAULT_SEASON_LENGTH, ENGINE_LIMITS, MODEL_REGISTRY, SEARCH, SHORTLIST_COMBINATION, THOROUGH_EXTRA, defaultHoldoutOrigins } from '../engine/index.js'
import type { RunSettings, SeriesItem } from '../schemas/run.js'
import { convertedPeriods } from './series-input.js'

/**
 * What one fit of a model costs, in fits of an average model of the default pool
 * (which count 1). Measured with `bench/model-cost.ts` on M3 monthly series
 * (bench/RESULTS.md, "Fit cost per model"), rounded: the state-space search fits
 * many forms by maximum likelihood, the median combination fits its members, and
 * auto-arima's stepwise search fits dozens of ARIMA models by Kalman filter.
 */
export const MODEL_COST_WEIGHTS: Readonly<Record<string, number>> = {
  'optimised-theta': 10,
  'dynamic-optimised-theta': 10,
  'state-space-smoothing': 500,
  'median-combination': 900,
  'auto-arima': 10_000,
}

/**
 * A model's weight: 1 for the default pool, MODEL_COST_WEIGHTS for the costlier ones, 0
 * for 'shortlist-combination' (the mean of models already fitted, no fit of its own).
 */
export function modelCostWeight(model: string): number {
  if (model === SHORTLIST_COMBINATION) return 0
  return MODEL_COST_WEIGHTS[model] ?? 1
}

const sumWeights = (models: readonly { readonly name: string }[]) => models.reduce((s, m) => s + modelCostWeight(m.name), 0)
const DEFAULT_POOL_WEIGHT = sumWeights(MODEL_REGISTRY)
const THOROUGH_POOL_WEIGHT = DEFAULT_POOL_WEIGHT + sumWeights(THOROUGH_EXTRA)

/**
 * Estimated fitting work of one series: points x season length x holdout
 * origins x candidate models, each candidate weighted by its cost (a model of
 * the default pool counts 1). Each candidate is fitted once per origin over
 * the history, and the seasonal ones start from a season-long window, so the
 * product tracks fitting time within a small factor (bench/RESULTS.md, "Fit
 * cost and time"). The thorough search adds its extra models and at least its
 * fewest holdout origins. A unit, not a duration.
 */
export function seriesFitCost(settings: RunSettings, series: SeriesItem): number {
  const frequency = series.frequency ?? settings.frequency
  const seasonLength = series.seasonLength ?? settings.seasonLength ?? DEFAULT_SEASON_LENGTH[frequency]
  const search = SEARCH[settings.modelSearch ?? 'fast']
  const horizon = convertedPeriods(settings, frequency).horizon
  const origins = Math.max(settings.holdoutOrigins ?? defaultHoldoutOrigins(seasonLength, horizon, ENGINE_LIMITS.maxOrigins), search.holdoutOrigins)
  // Listed models are fitted whatever the search; unlisted, the search's pool.
  const candidates =
    settings.models !== undefined
      ? settings.models.reduce((s, m) => s + modelCostWeight(m), 0)
      : settings.modelSearch === 'thorough'
        ? THOROUGH_POOL_WEIGHT
        : DEFAULT_POOL_WEIGHT
  return series.demand.length * seasonLength * origins * candidates
}

/** The fitting work of a whole request: the sum over its series. */
export function requestFitCost(settings: RunSettings, series: readonly SeriesItem[]): number {
  let total = 0
  for (const s of series) total += seriesFitCost(settings, s)
  return total
}
