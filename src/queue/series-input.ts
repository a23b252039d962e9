import type { SeriesInput } from '../engine/index.js'
import type { RunSettings, SeriesItem } from '../schemas/run.js'

/**
 * One request series as engine input: the run's settings, overridden by the
 * series' own `frequency`, `start` and `seasonLength`. Absent options stay
 * absent so the engine applies its defaults.
 */
export function toSeriesInput(settings: RunSettings, item: SeriesItem): SeriesInput {
  const input: { -readonly [K in keyof SeriesInput]: SeriesInput[K] } = {
    values: item.values,
    frequency: item.frequency ?? settings.frequency,
    horizon: settings.horizon,
    metric: settings.metric,
    intervals: settings.intervals,
    fillPolicy: settings.fillPolicy,
    allowNegative: settings.allowNegative,
    keepLeadingZeros: settings.keepLeadingZeros,
    origins: settings.origins,
  }
  const start = item.start
  const seasonLength = item.seasonLength ?? settings.seasonLength
  if (start !== undefined) input.start = start
  if (seasonLength !== undefined) input.seasonLength = seasonLength
  if (settings.holdout !== undefined) input.holdout = settings.holdout
  if (settings.models !== undefined) input.models = settings.models
  return input
}
