import type { SeriesInput } from '../engine/index.js'
import { firstPeriodLabel } from '../history/buckets.js'
import { MAX_HORIZON, type RunSettings, type SeriesItem } from '../schemas/run.js'
import { DAYS_PER_PERIOD } from './stock-policy.js'

/**
 * A run-level count of periods (horizon, holdoutPeriods) counts periods of the
 * run's `frequency`; for a series of another frequency it is converted through
 * days by the calendar rule (stock-policy.ts), so the forecast covers the same
 * stretch of time. The horizon rounds up (at least the span asked for, at most
 * MAX_HORIZON), the holdout to the nearest period (at least 1). Same frequency:
 * unchanged. forecast-sku.ts adds a warning per converted setting.
 */
export function convertedPeriods(settings: RunSettings, frequency: SeriesInput['frequency']): { horizon: number; holdoutPeriods?: number } {
  const { horizon, holdoutPeriods } = settings
  if (frequency === settings.frequency) return holdoutPeriods === undefined ? { horizon } : { horizon, holdoutPeriods }
  const ratio = DAYS_PER_PERIOD[settings.frequency] / DAYS_PER_PERIOD[frequency]
  const out = { horizon: Math.min(MAX_HORIZON, Math.max(1, Math.ceil(horizon * ratio - 1e-9))) }
  return holdoutPeriods === undefined ? out : { ...out, holdoutPeriods: Math.min(MAX_HORIZON, Math.max(1, Math.round(holdoutPeriods * ratio))) }
}

/**
 * One request series as engine input: the run's settings, overridden by the
 * series' own `frequency`, `firstPeriod` and `seasonLength` (a run-level
 * seasonLength applies only to series of the run's frequency; a run-level horizon
 * and holdoutPeriods are converted for them, convertedPeriods). Absent options stay
 * absent so the engine applies its defaults. A weekly series may start at a
 * calendar date: its ISO week.
 */
export function toSeriesInput(settings: RunSettings, item: SeriesItem): SeriesInput {
  const input: { -readonly [K in keyof SeriesInput]: SeriesInput[K] } = {
    demand: item.demand,
    frequency: item.frequency ?? settings.frequency,
    horizon: convertedPeriods(settings, item.frequency ?? settings.frequency).horizon,
    rankBy: settings.rankBy,
    intervalLevels: settings.intervalLevels,
    missingPeriods: settings.missingPeriods,
    allowNegativeDemand: settings.allowNegativeDemand,
    keepLeadingZeros: settings.keepLeadingZeros,
  }
  if (settings.holdoutOrigins !== undefined) input.holdoutOrigins = settings.holdoutOrigins
  // A run-level seasonLength counts periods of the run's frequency: other frequencies keep their default.
  const frequency = item.frequency ?? settings.frequency
  const seasonLength = item.seasonLength ?? (frequency === settings.frequency ? settings.seasonLength : undefined)
  if (item.firstPeriod !== undefined) input.firstPeriod = firstPeriodLabel(item.firstPeriod, input.frequency)
  if (seasonLength !== undefined) input.seasonLength = seasonLength
  const holdoutPeriods = convertedPeriods(settings, frequency).holdoutPeriods
  if (holdoutPeriods !== undefined) input.holdoutPeriods = holdoutPeriods
  if (settings.models !== undefined) input.models = settings.models
  if (settings.quantiles !== undefined) input.quantiles = settings.quantiles
  if (settings.modelSearch !== undefined) input.modelSearch = settings.modelSearch
  return input
}
