import type { Redis } from 'ioredis'
import { formatPeriod, parsePeriod } from '../engine/index.js'
import type { PendingHistory } from '../history/accumulator.js'
import type { HistoryData } from '../history/types.js'
import type { AccuracyStore } from './accuracy-store.js'
import { HistoryStore } from './history-store.js'

/** SKUs scored at once after a write batch. */
const PARALLEL = 16

/**
 * A history store that scores forecasts as actuals arrive: after every write
 * (bulk upload or single PUT), each SKU written passes its stored history to
 * `AccuracyStore.recordActuals`, which scores only the periods its latest
 * forecast covered and skips periods scored before with the same value. Scoring never fails an upload: an error goes
 * to `onError` and the history is stored all the same.
 */
export class AccuracyTrackingHistoryStore extends HistoryStore {
  constructor(
    redis: Redis,
    opts: ConstructorParameters<typeof HistoryStore>[1],
    private readonly accuracy: Pick<AccuracyStore, 'recordActuals'>,
    private readonly onError: (err: unknown, tenant: string, sku: string) => void,
  ) {
    super(redis, opts)
  }

  override async apply(
    tenant: string,
    batch: readonly PendingHistory[],
    merge: (current: HistoryData | null, pending: PendingHistory) => { data: HistoryData } | { reason: string },
  ): Promise<({ outcome: 'created' | 'updated' } | { reason: string })[]> {
    // What each SKU's history became (the merge result is what gets stored).
    const stored = new Map<string, HistoryData>()
    const results = await super.apply(tenant, batch, (current, pending) => {
      const merged = merge(current, pending)
      if ('data' in merged) stored.set(pending.sku, merged.data)
      return merged
    })
    const written = batch.filter((_, i) => {
      const r = results[i]
      return r !== undefined && 'outcome' in r
    })
    for (let i = 0; i < written.length; i += PARALLEL) {
      await Promise.all(
        written.slice(i, i + PARALLEL).map(async (p) => {
          const data = stored.get(p.sku)
          if (!data) return
          try {
            const first = parsePeriod(data.start, data.frequency)
            const periodValues = data.values.map((value, t) => ({ period: formatPeriod(first + t, data.frequency), value }))
            await this.accuracy.recordActuals(tenant, p.sku, data.frequency, periodValues)
          } catch (err) {
            this.onError(err, tenant, p.sku)
          }
        }),
      )
    }
    return results
  }
}
