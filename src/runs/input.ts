import { EngineInputError } from '../engine/index.js'
import type { RunRequest, SeriesItem } from '../schemas/run.js'
import { checkRunStockPolicy } from './stock-policy.js'

/**
 * A request or page parameter the run machinery refuses (maps to HTTP 400).
 * `field` is the offending path, e.g. `series[7].sku` or `cursor`.
 */
export class RunInputError extends Error {
  override readonly name = 'RunInputError'
  constructor(
    readonly code: 'duplicate-sku' | 'invalid-option' | 'empty-scope',
    message: string,
    readonly field: string,
  ) {
    super(message)
  }
}

/**
 * Cross-field checks the schema cannot express.
 * @throws RunInputError when the replenishment lead time plus review period exceeds the horizon.
 */
export function checkRunOptions(settings: Pick<RunRequest, 'horizon' | 'replenishment' | 'frequency'>): void {
  if (!settings.replenishment) return
  try {
    checkRunStockPolicy(settings.replenishment, settings.frequency, settings.horizon)
  } catch (err) {
    if (err instanceof EngineInputError) throw new RunInputError('invalid-option', err.message, err.field ?? 'replenishment')
    throw err
  }
}

/**
 * A SKU appears once per run: a second occurrence is refused rather than one
 * of the two results silently replacing the other.
 * @throws RunInputError naming `series[i].sku` of the second occurrence.
 */
export function checkUniqueSkus(series: readonly Pick<SeriesItem, 'sku'>[]): void {
  const seen = new Set<string>()
  series.forEach((s, i) => {
    if (seen.has(s.sku)) throw new RunInputError('duplicate-sku', `SKU ${JSON.stringify(s.sku)} appears more than once`, `series[${i}].sku`)
    seen.add(s.sku)
  })
}

/** The problem field of a scope that matched no stored history. */
export function emptyScopeError(scope: { readonly skus: readonly string[] } | { readonly tags: readonly string[] } | { readonly all: true }): RunInputError {
  const field = 'skus' in scope ? 'scope.skus' : 'tags' in scope ? 'scope.tags' : 'scope.all'
  return new RunInputError('empty-scope', 'the scope matches no stored history', field)
}

/**
 * Settings that only mean something for stored histories.
 * @throws RunInputError naming `openPeriods` on a run over inline series.
 */
export function checkInlineOptions(settings: Pick<RunRequest, 'openPeriods' | 'newProductPeers'>): void {
  if (settings.openPeriods !== undefined) {
    throw new RunInputError('invalid-option', 'openPeriods applies to stored histories (scope); inline series are fitted as sent', 'openPeriods')
  }
  if (settings.newProductPeers !== undefined) {
    throw new RunInputError('invalid-option', 'newProductPeers needs stored histories (scope): inline series carry no tags', 'newProductPeers')
  }
}
