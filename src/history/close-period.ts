import type { WriteOutcome } from './ingest.js'
import { formatPeriod, parsePeriod, type Frequency } from '../engine/index.js'
import type { PendingHistory } from './accumulator.js'
import type { HistoryData } from './types.js'
import { MAX_POINTS_PER_SERIES } from '../schemas/run.js'

/**
 * Closing a period: every stored history of the frequency that ends before it
 * is carried forward to it with zero demand in the periods nothing was sent
 * for. A closed period is complete, so "no rows" means "no demand": without
 * this, an item with no sales this month would stay at its last sale's period
 * and its zeros would never be fitted or scored. Histories of other
 * frequencies, and those already reaching the period, are left as they are.
 */

/** The history carried forward to `throughOrdinal`, or why it is left alone. */
export function extendWithZeros(current: HistoryData | null, frequency: Frequency, throughOrdinal: number): { data: HistoryData } | { reason: string } {
  if (current === null) return { reason: 'the history was deleted meanwhile' }
  if (current.frequency !== frequency) return { reason: `the history is by ${current.frequency}` }
  const last = parsePeriod(current.firstPeriod, frequency) + current.demand.length - 1
  if (last >= throughOrdinal) return { reason: `the history already reaches ${formatPeriod(throughOrdinal, frequency)}` }
  // The bound of every history write (merge.ts): without it, closings would grow a history, and its accuracy records, for ever.
  const length = current.demand.length + throughOrdinal - last
  if (length > MAX_POINTS_PER_SERIES) return { reason: `the history would hold ${length} periods; at most ${MAX_POINTS_PER_SERIES}` }
  return { data: { ...current, demand: [...current.demand, ...new Array<number>(throughOrdinal - last).fill(0)] } }
}

/** True when a history of `frequency` ending at `lastOrdinal` needs carrying forward. */
export function endsBefore(history: { readonly frequency: Frequency; readonly firstPeriod: string; readonly demand: readonly unknown[] }, frequency: Frequency, throughOrdinal: number): boolean {
  if (history.frequency !== frequency) return false
  return parsePeriod(history.firstPeriod, frequency) + history.demand.length - 1 < throughOrdinal
}

/** The apply() entry of a SKU whose stored history is carried forward (the merge ignores `incoming`). */
export function carryForwardEntry(sku: string, frequency: Frequency): PendingHistory {
  return { sku, incoming: { frequency, startOrdinal: 0, demand: [] }, rows: 0, origin: {} }
}

interface StoredHistoryLike extends HistoryData {
  readonly sku: string
}

/** What closing a period needs from the stores (history-store.ts, closing-store.ts, accuracy-store.ts). */
export interface ClosingDeps {
  readonly histories: {
    select(tenant: string, scope: { readonly all: true }, batchSize: number): AsyncIterable<StoredHistoryLike[]>
    apply(
      tenant: string,
      batch: readonly PendingHistory[],
      merge: (current: HistoryData | null, pending: PendingHistory) => { data: HistoryData } | { reason: string },
      opts: { readonly carriedForward: true },
    ): Promise<readonly WriteOutcome[]>
  }
  readonly closing: {
    close(tenant: string, frequency: Frequency, period: string): Promise<{ outcome: 'moved' | 'unchanged' | 'behind'; previous: string | null }>
  }
  readonly accuracy: {
    rescoreMany(
      tenant: string,
      entries: readonly { sku: string; frequency: Frequency; firstPeriod: string; demand: readonly (number | null)[] }[],
    ): Promise<unknown>
  }
}

export interface ClosingReport {
  readonly outcome: 'moved' | 'unchanged' | 'behind'
  readonly frequency: Frequency
  readonly closedThrough: string
  readonly previous: string | null
  /** Histories of the frequency looked at, and those carried forward with zeros. */
  readonly checkedSkus: number
  readonly advancedSkus: number
}

/**
 * Closes the frequency's periods through `period`, then walks every stored
 * history in batches: carries those of the frequency that end earlier forward
 * with zeros, and rescores all of them (the newly closed periods can now be
 * scored). Safe to repeat: a second call with the same period finds nothing to
 * carry forward and rescoring changes nothing, so a call that failed midway is
 * simply sent again. Nothing is walked when a later period is already closed.
 */
export async function closePeriod(deps: ClosingDeps, tenant: string, frequency: Frequency, period: string, batchSize = 500): Promise<ClosingReport> {
  const through = parsePeriod(period, frequency)
  const closedThrough = formatPeriod(through, frequency)
  const { outcome, previous } = await deps.closing.close(tenant, frequency, closedThrough)
  let checkedSkus = 0
  let advancedSkus = 0
  if (outcome !== 'behind') {
    for await (const batch of deps.histories.select(tenant, { all: true }, batchSize)) {
      const ofFrequency = batch.filter((h) => h.frequency === frequency)
      checkedSkus += ofFrequency.length
      const behind = ofFrequency.filter((h) => endsBefore(h, frequency, through))
      const extended = new Map<string, HistoryData>()
      if (behind.length > 0) {
        const results = await deps.histories.apply(
          tenant,
          behind.map((h) => carryForwardEntry(h.sku, frequency)),
          (current, pending) => {
            const merged = extendWithZeros(current, frequency, through)
            if ('data' in merged) extended.set(pending.sku, merged.data)
            return merged
          },
          // Zeros for a closed period are not news from the ERP: a SKU with nothing but closings stays idle.
          { carriedForward: true },
        )
        advancedSkus += results.filter((r) => 'outcome' in r).length
      }
      await deps.accuracy.rescoreMany(
        tenant,
        ofFrequency.map((h) => {
          const d = extended.get(h.sku) ?? h
          return { sku: h.sku, frequency, firstPeriod: d.firstPeriod, demand: d.demand }
        }),
      )
    }
  }
  return { outcome, frequency, closedThrough, previous, checkedSkus, advancedSkus }
}
