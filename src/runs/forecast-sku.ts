import { EngineInputError, replenishmentFor, type ForecastResult, type Frequency, type SeriesInput } from '../engine/index.js'
import type { RunSettings, SeriesItem } from '../schemas/run.js'
import type { ForecastItem, ResultItem } from './contract.js'
import { REPLENISHMENT_SKIPPED } from './failures.js'
import { toSeriesInput } from './series-input.js'

/**
 * Forecasts one series. Input the engine rejects becomes an error item; any
 * other error propagates so the whole chunk is retried.
 */
export function forecastItem(
  forecast: (input: SeriesInput) => ForecastResult,
  settings: RunSettings,
  series: SeriesItem,
): ResultItem {
  const input = toSeriesInput(settings, series)
  try {
    const result = forecast(input)
    return withReplenishment(toResultItem(series.sku, input.frequency, result), result, settings)
  } catch (err) {
    if (err instanceof EngineInputError) return { sku: series.sku, frequency: input.frequency, failure: { code: err.code, message: err.message } }
    throw err
  }
}

/**
 * Adds replenishment figures when the settings ask for them. Options the
 * engine refuses (the gateway checks them before a run is queued) leave the
 * forecast as it is, with a warning.
 */
function withReplenishment(item: ForecastItem, result: ForecastResult, settings: RunSettings): ResultItem {
  if (!settings.replenishment) return item
  try {
    return { ...item, replenishment: replenishmentFor(result, settings.replenishment) }
  } catch (err) {
    if (!(err instanceof EngineInputError)) throw err
    return { ...item, warnings: [...item.warnings, { code: REPLENISHMENT_SKIPPED, message: err.message }] }
  }
}

/** The stored part of a successful engine result (no fitted values, no history). */
export function toResultItem(sku: string, frequency: Frequency, r: ForecastResult): ForecastItem {
  return {
    sku,
    frequency,
    model: r.model,
    family: r.family,
    params: r.params,
    modelChoice: r.modelChoice,
    holdoutErrors: r.holdoutErrors,
    candidates: r.candidates,
    forecast: r.forecast,
    intervalMethod: r.intervalMethod,
    warnings: r.warnings,
  }
}
