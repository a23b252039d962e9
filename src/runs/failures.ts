import type { Failure } from './contract.js'

/**
 * `failure.code` of a run that failed as a whole (docs/problems.md lists these
 * beside the item, delivery and firing codes): a chunk that failed its last
 * attempt, or chunks that could not be queued.
 */
export const RUN_FAILURE_CODES = ['chunk-failed', 'enqueue-failed'] as const
export type RunFailureCode = (typeof RUN_FAILURE_CODES)[number]

export function runFailure(code: RunFailureCode, message: string): Failure {
  return { code, message }
}

/** Replenishment figures were asked for but do not fit the series (the forecast stands without them). */
export const REPLENISHMENT_SKIPPED = 'replenishment-skipped'

/** A stored history was fitted with periods after the closed-through period (`openPeriods: "include"`). */
export const OPEN_PERIODS_FITTED = 'open-periods-fitted'

/** A run-level duration in periods was converted to the periods of a SKU of another frequency. */
export const PERIOD_SETTING_CONVERTED = 'period-setting-converted'

/** A run-level setting counted in periods of the run's frequency was not applied to a SKU of another frequency. */
export const PERIOD_SETTING_NOT_APPLIED = 'period-setting-not-applied'

/** A new product's forecast was blended with its peers' level (runs/peer-levels.ts). */
export const PEER_LEVEL_BLENDED = 'peer-level-blended'

/** Warning codes the service adds to result items beside the engine's own (docs/warnings.md). */
export const SERVICE_WARNING_CODES = [REPLENISHMENT_SKIPPED, OPEN_PERIODS_FITTED, PERIOD_SETTING_CONVERTED, PERIOD_SETTING_NOT_APPLIED, PEER_LEVEL_BLENDED] as const

/** `failure.code` of a series whose synchronous fit ran past SYNC_SERIES_TIMEOUT_MS (its thread was ended). */
export const FIT_TIME_LIMIT = 'fit-time-limit'

/** Item failure codes the service adds beside the engine's input error codes (docs/problems.md). */
export const SERVICE_ITEM_FAILURE_CODES = [FIT_TIME_LIMIT] as const
