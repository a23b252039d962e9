import { EngineInputError, replenishmentFor, type ForecastResult, type Frequency, type SeriesInput } from '../engine/index.js'
import type { RunSettings, SeriesItem } from '../schemas/run.js'
import type { ForecastItem, ResultItem } from './contract.js'
import { PEER_LEVEL_BLENDED, PERIOD_SETTING_CONVERTED, PERIOD_SETTING_NOT_APPLIED, REPLENISHMENT_SKIPPED } from './failures.js'
import { blendWithPeers, NEW_PRODUCT_PERIODS, ownWeight, type PeerLevel } from './peer-levels.js'
import { convertedPeriods, toSeriesInput } from './series-input.js'
import { DAYS_PER_PERIOD, resolveStockPolicy, type ItemWarning } from './stock-policy.js'

/**
 * Forecasts one series. Input the engine rejects becomes an error item; any
 * other error propagates so the whole chunk is retried.
 */
export function forecastItem(
  forecast: (input: SeriesInput) => ForecastResult,
  settings: RunSettings,
  series: SeriesItem & { readonly peerLevel?: PeerLevel | undefined },
): ResultItem {
  const input = toSeriesInput(settings, series)
  try {
    const own = forecast(input)
    const peer = series.peerLevel !== undefined && series.demand.length < NEW_PRODUCT_PERIODS ? series.peerLevel : undefined
    const result = peer ? blendWithPeers(own, peer, series.demand.length, settings.allowNegativeDemand) : own
    const item = toResultItem(series.sku, input.frequency, result)
    const notes = [...settingWarnings(settings, series, input.frequency), ...(peer ? [peerWarning(peer, series.demand.length)] : [])]
    return withReplenishment(notes.length === 0 ? item : { ...item, warnings: [...item.warnings, ...notes] }, result, settings, series)
  } catch (err) {
    if (err instanceof EngineInputError) return { sku: series.sku, frequency: input.frequency, failure: { code: err.code, message: err.message } }
    throw err
  }
}

/**
 * Run-level counts of periods, for a SKU of another frequency than the run's: a
 * seasonLength is not applied (52 weeks would make a monthly SKU non-seasonal:
 * the SKU keeps its own default), horizon and holdoutPeriods are converted
 * through days (series-input.ts). Each item says so.
 */
function settingWarnings(settings: RunSettings, series: SeriesItem, frequency: Frequency): ItemWarning[] {
  if (frequency === settings.frequency) return []
  const out: ItemWarning[] = []
  if (settings.seasonLength !== undefined && series.seasonLength === undefined) {
    out.push({
      code: PERIOD_SETTING_NOT_APPLIED,
      message: `seasonLength ${settings.seasonLength} counts ${settings.frequency} periods (the run's frequency); this ${frequency} SKU uses its own default`,
    })
  }
  const converted = convertedPeriods(settings, frequency)
  const rule = `calendar rule: ${round4(DAYS_PER_PERIOD[settings.frequency])} days per ${settings.frequency}, ${round4(DAYS_PER_PERIOD[frequency])} per ${frequency}`
  out.push({
    code: PERIOD_SETTING_CONVERTED,
    message: `horizon ${settings.horizon} counts ${settings.frequency} periods (the run's frequency); for this ${frequency} SKU it is ${converted.horizon} ${frequency} periods, rounded up (${rule})`,
  })
  if (settings.holdoutPeriods !== undefined && converted.holdoutPeriods !== undefined) {
    out.push({
      code: PERIOD_SETTING_CONVERTED,
      message: `holdoutPeriods ${settings.holdoutPeriods} counts ${settings.frequency} periods; for this ${frequency} SKU it is ${converted.holdoutPeriods} ${frequency} periods, rounded (${rule})`,
    })
  }
  return out
}

const round4 = (x: number) => Math.round(x * 1e4) / 1e4

function peerWarning(peer: PeerLevel, n: number): ItemWarning {
  const w = ownWeight(n)
  return {
    code: PEER_LEVEL_BLENDED,
    message:
      `a new product (${n} periods): its forecast is blended with the level of ${peer.peers} SKUs tagged ${peer.tag} ` +
      `(median recent demand ${round4(peer.level)}), weight ${round4(w)} on its own forecast and ${round4(1 - w)} on theirs`,
  }
}

/**
 * Adds replenishment figures when the run asks for them, from the SKU's stock
 * policy over the run's defaults. A SKU whose policy is incomplete or does not
 * fit the forecast keeps the forecast as it is, with a warning.
 */
function withReplenishment(item: ForecastItem, result: ForecastResult, settings: RunSettings, series: SeriesItem): ResultItem {
  if (!settings.replenishment) return item
  const skip = (message: string): ResultItem => ({ ...item, warnings: [...item.warnings, { code: REPLENISHMENT_SKIPPED, message }] })
  const policy = resolveStockPolicy(settings.replenishment, series.replenishment, settings.frequency, item.frequency)
  if ('reason' in policy) return skip(policy.reason)
  try {
    const replenishment = replenishmentFor(result, policy.options)
    return { ...item, warnings: [...item.warnings, ...policy.warnings], replenishment }
  } catch (err) {
    if (!(err instanceof EngineInputError)) throw err
    return skip(err.message)
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
