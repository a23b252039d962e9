import { DEFAULT_SEASON_LENGTH, MODEL_REGISTRY } from '../engine/index.js'
import type { RunSettings, SeriesItem } from '../schemas/run.js'

/**
 * Estimated fitting work of one series: points x season length x holdout
 * origins x candidate models. Each candidate is fitted once per origin over
 * the history, and the seasonal ones start from a season-long window, so the
 * product tracks fitting time within a small factor (bench/RESULTS.md, "Fit
 * cost and time"). A unit, not a duration.
 */
export function seriesFitCost(settings: RunSettings, series: SeriesItem): number {
  const frequency = series.frequency ?? settings.frequency
  const seasonLength = series.seasonLength ?? settings.seasonLength ?? DEFAULT_SEASON_LENGTH[frequency]
  // Unlisted models mean the default pool: the registry's models (model ids outside it are never fitted by default).
  const candidates = settings.models?.length ?? MODEL_REGISTRY.length
  return series.demand.length * seasonLength * settings.holdoutOrigins * candidates
}

/** The fitting work of a whole request: the sum over its series. */
export function requestFitCost(settings: RunSettings, series: readonly SeriesItem[]): number {
  let total = 0
  for (const s of series) total += seriesFitCost(settings, s)
  return total
}
