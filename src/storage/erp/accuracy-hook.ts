import type { RedisClient } from '../redis.js'
import type { PendingHistory } from '../../history/accumulator.js'
import type { HistoryData } from '../../history/types.js'
import type { WriteOutcome } from '../../history/ingest.js'
import type { AccuracyStore, HistoryEntry } from './accuracy-store.js'
import { HistoryStore } from '../histories/history-store.js'

/**
 * A history store that scores forecasts as actuals arrive: after every write
 * (bulk upload batch, single PUT, a closing) the stored histories of the SKUs
 * written go to `AccuracyStore.rescoreMany`, which scores the closed periods
 * that a published forecast covered, follows corrections, and leaves periods
 * already scored with the same value alone. Scoring never fails an upload: an
 * error goes to `onError` and the histories are stored all the same.
 */
export class AccuracyTrackingHistoryStore extends HistoryStore {
  constructor(
    redis: RedisClient,
    opts: ConstructorParameters<typeof HistoryStore>[1],
    private readonly accuracy: Pick<AccuracyStore, 'rescoreMany'>,
    /** `what`: the SKU, or how many SKUs a failed batch held. */
    private readonly onError: (err: unknown, tenant: string, what: string) => void,
    /** Also told of every history stored (adjustments: value added and expiry); its errors go to onError. */
    private readonly alsoStored?: (tenant: string, entries: readonly (HistoryData & { readonly sku: string })[]) => Promise<void>,
  ) {
    super(redis, opts)
  }

  override async apply(
    tenant: string,
    batch: readonly PendingHistory[],
    merge: (current: HistoryData | null, pending: PendingHistory) => { data: HistoryData } | { reason: string },
    opts?: Parameters<HistoryStore['apply']>[3],
  ): Promise<WriteOutcome[]> {
    // What each SKU's history became (the merge result is what gets stored).
    const stored = new Map<string, HistoryData>()
    const results = await super.apply(tenant, batch, (current, pending) => {
      const merged = merge(current, pending)
      if ('data' in merged) stored.set(pending.sku, merged.data)
      return merged
    }, opts)
    const entries: HistoryEntry[] = []
    batch.forEach((p, i) => {
      const r = results[i]
      const data = stored.get(p.sku)
      // A SKU its feed batch had already written was not written again: nothing new to score.
      if (r === undefined || !('outcome' in r) || r.outcome === 'already-applied' || !data) return
      entries.push({ sku: p.sku, frequency: data.frequency, firstPeriod: data.firstPeriod, demand: data.demand })
    })
    try {
      await this.accuracy.rescoreMany(tenant, entries)
    } catch (err) {
      this.onError(err, tenant, entries.length === 1 ? entries[0]!.sku : `${entries.length} SKUs`)
    }
    await this.alsoStored?.(tenant, batch.flatMap((p, i) => (results[i] && 'outcome' in results[i] && stored.has(p.sku) ? [{ sku: p.sku, ...stored.get(p.sku)! }] : []))).catch((err: unknown) => this.onError(err, tenant, `${stored.size} SKUs`))
    return results
  }
}
