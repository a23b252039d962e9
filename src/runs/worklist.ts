import type { ResultItem } from './contract.js'

/**
 * The planners' exception worklist: which SKUs need a look after a publishing
 * run, and why. Four kinds:
 *
 *   biased          the SKU's tracking signal flags its forecasts (accuracy store)
 *   large-change    the newly published forecast differs from the SKU's previous
 *                   published one by at least the change threshold (below)
 *   failed          the run could not forecast the SKU (its item carries a failure)
 *   short-history   the engine warned `short-history` on the published forecast
 *
 * This module decides kinds 2-4 for one SKU of a run; storage/worklist keeps them.
 */
export const WORKLIST_KINDS = ['biased', 'large-change', 'failed', 'short-history'] as const
export type WorklistKind = (typeof WORKLIST_KINDS)[number]

/** The kinds a publishing run decides (biased follows the actuals, not the run). */
export const RUN_KINDS = ['large-change', 'failed', 'short-history'] as const
export type RunKind = (typeof RUN_KINDS)[number]

/**
 * Default large-change threshold, in percent: |change of the summed common
 * periods| / |previous sum| >= 25 %. Our default, not a standard of the trade
 * (config WORKLIST_CHANGE_PERCENT).
 */
export const DEFAULT_CHANGE_PERCENT = 25

/** What a run's item says about the worklist, taken when the item is fitted. */
export interface WorklistSignals {
  readonly sku: string
  /** The failure of a failed item, else null. */
  readonly failure: { readonly code: string; readonly message: string } | null
  /** Periods of the fitted history when the engine warned short-history, else null. */
  readonly shortHistory: number | null
}

/** One SKU's run-decided worklist entry. */
export interface WorklistEntry {
  readonly sku: string
  readonly kinds: readonly RunKind[]
  /** (new sum − previous sum) / |previous sum| over the common periods; null without a comparison or from a zero sum. */
  readonly changeRatio: number | null
  /** The run of the previous published forecast compared with; null when there was none. */
  readonly previousRunId: string | null
  /** Common periods of the comparison (0 without one). */
  readonly commonPeriods: number
  readonly failure: WorklistSignals['failure']
  readonly historyLength: number | null
}

/** Failure messages are cut to this length in the worklist (the run's result has the full text). */
const MESSAGE_CHARS = 300

/** The worklist signals of a fitted item; `historyLength` is the number of periods of the series it fitted. */
export function itemSignals(item: ResultItem, historyLength: number): WorklistSignals {
  if ('failure' in item) {
    return { sku: item.sku, failure: { code: item.failure.code, message: item.failure.message.slice(0, MESSAGE_CHARS) }, shortHistory: null }
  }
  const short = item.warnings.some((w) => w.code === 'short-history')
  return { sku: item.sku, failure: null, shortHistory: short ? historyLength : null }
}

export interface ForecastChange {
  /** null when the previous sum is 0 (a change from nothing has no ratio). */
  readonly ratio: number | null
  readonly commonPeriods: number
  /** True when the change reaches the threshold (from a zero sum: any non-zero new sum). */
  readonly large: boolean
}

/**
 * Compares a new point forecast with the previous one over the periods both
 * cover: the relative change of their sums. Null when they share no period.
 * A sum is compared, not each period, so a forecast that only moves demand
 * between periods is not flagged.
 */
export function forecastChange(
  previous: ReadonlyMap<string, number>,
  current: ReadonlyMap<string, number>,
  thresholdPercent: number = DEFAULT_CHANGE_PERCENT,
): ForecastChange | null {
  let before = 0
  let after = 0
  let common = 0
  for (const [period, value] of current) {
    const old = previous.get(period)
    if (old === undefined) continue
    before += old
    after += value
    common++
  }
  if (common === 0) return null
  if (before === 0) return { ratio: null, commonPeriods: common, large: after !== 0 }
  const ratio = (after - before) / Math.abs(before)
  // A small tolerance so that a change of exactly the threshold counts despite rounding.
  return { ratio, commonPeriods: common, large: Math.abs(ratio) >= thresholdPercent / 100 - 1e-12 }
}

/**
 * The run-decided entry of one SKU. `current` is the point forecast this run
 * published (null for a failed item), `previous` the SKU's previous published
 * forecast (null when none).
 */
export function decideWorklist(
  signals: WorklistSignals,
  current: { readonly points: ReadonlyMap<string, number> } | null,
  previous: { readonly runId: string; readonly points: ReadonlyMap<string, number> } | null,
  thresholdPercent: number = DEFAULT_CHANGE_PERCENT,
): WorklistEntry {
  const kinds: RunKind[] = []
  const change = current !== null && previous !== null ? forecastChange(previous.points, current.points, thresholdPercent) : null
  if (change?.large) kinds.push('large-change')
  if (signals.failure !== null) kinds.push('failed')
  if (signals.failure === null && signals.shortHistory !== null) kinds.push('short-history')
  return {
    sku: signals.sku,
    kinds,
    changeRatio: change?.ratio ?? null,
    previousRunId: change === null ? null : previous!.runId,
    commonPeriods: change?.commonPeriods ?? 0,
    failure: signals.failure,
    historyLength: signals.failure === null ? signals.shortHistory : null,
  }
}

/**
 * In a SKU's kept published forecasts (newest first), this run's forecast and
 * the one published before it; `current` null when this run's is not in the
 * list (a failed item, or a run older than every kept forecast).
 */
export function pickComparison<T extends { readonly runId: string }>(published: readonly T[], runId: string): { current: T | null; previous: T | null } {
  const i = published.findIndex((p) => p.runId === runId)
  if (i < 0) return { current: null, previous: null }
  return { current: published[i]!, previous: published[i + 1] ?? null }
}
