import { METRIC_NAMES, MODEL_NAMES, type MetricName, type ModelName } from '../engine/index.js'
import type { ResultItem } from './contract.js'

/**
 * What the SKU list knows of a SKU's newest published outcome, decided from its
 * result item when a publishing run commits it: the chosen model, the warning
 * codes, whether the fit failed, and the holdout error the run ranked by.
 * The SKU list filters and shows these (GET /v1/skus, docs/workbench.md).
 */
export interface SkuSummary {
  /** The chosen model; null for a failed item. */
  readonly model: ModelName | null
  /** Distinct warning codes of the item, sorted (byte order). */
  readonly warnings: readonly string[]
  readonly failed: boolean
  /**
   * The chosen model's holdout error named by the run's `rankBy`; null when the
   * model was not chosen on a holdout (too short a history) or the value is not finite.
   */
  readonly error: { readonly measure: MetricName; readonly value: number } | null
}

/** Warning codes are kebab-case words (docs/warnings.md); anything else is not indexed. */
export const WARNING_CODE_PATTERN = /^[a-z0-9][a-z0-9-]{0,63}$/

const isModel = (s: string): s is ModelName => (MODEL_NAMES as readonly string[]).includes(s)
const isMetric = (s: string): s is MetricName => (METRIC_NAMES as readonly string[]).includes(s)

/**
 * The summary of one result item. The error is the one the tally counts
 * (runs/tally.ts): only where selection used a holdout, on the item's own
 * `modelChoice.rankBy`, and only when finite.
 */
export function summariseItem(item: ResultItem): SkuSummary {
  if ('failure' in item) return { model: null, warnings: [], failed: true, error: null }
  const warnings = [...new Set(item.warnings.map((w) => w.code).filter((c) => WARNING_CODE_PATTERN.test(c)))].sort()
  const measure = item.modelChoice.rankBy
  const value = item.modelChoice.method === 'holdout' ? item.holdoutErrors?.[measure] : null
  return {
    model: isModel(item.model) ? item.model : null,
    warnings,
    failed: false,
    error: typeof value === 'number' && Number.isFinite(value) && isMetric(measure) ? { measure, value } : null,
  }
}
