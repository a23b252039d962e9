import type { SeriesInput } from '../engine/index.js'
import { firstPeriodLabel } from '../history/buckets.js'
import type { RunSettings, SeriesItem } from '../schemas/run.js'

/**
 * One request series as engine input: the run's settings, overridden by the
 * series' own `frequency`, `firstPeriod` and `seasonLength` (a run-level
 * seasonLength applies only to series of the run's frequency). Absent options stay
 * absent so the engine applies its defaults. A weekly series may start at a
 * calendar date: its ISO week.
 */
export function toSeriesInput(settings: RunSettings, item: SeriesItem): SeriesInput {
  const input: { -readonly [K in keyof SeriesInput]: SeriesInput[K] } = {
    demand: item.demand,
    frequency: item.frequency ?? settings.frequency,
    horizon: settings.horizon,
    rankBy: settings.rankBy,
    intervalLevels: settings.intervalLevels,
    missingPeriods: settings.missingPeriods,
    allowNegativeDemand: settings.allowNegativeDemand,
    keepLeadingZeros: settings.keepLeadingZeros,
    holdoutOrigins: settings.holdoutOrigins,
  }
  // A run-level seasonLength counts periods of the run's frequency: other frequencies keep their default.
  const frequency = item.frequency ?? settings.frequency
  const seasonLength = item.seasonLength ?? (frequency === settings.frequency ? settings.seasonLength : undefined)
  if (item.firstPeriod !== undefined) input.firstPeriod = firstPeriodLabel(item.firstPeriod, input.frequency)
  if (seasonLength !== undefined) input.seasonLength = seasonLength
  if (settings.holdoutPeriods !== undefined) input.holdoutPeriods = settings.holdoutPeriods
  if (settings.models !== undefined) input.models = settings.models
  if (settings.quantiles !== undefined) input.quantiles = settings.quantiles
  if (settings.modelSearch !== undefined) input.modelSearch = settings.modelSearch
  return input
}
