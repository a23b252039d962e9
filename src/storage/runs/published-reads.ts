import type { RedisClient } from '../redis.js'
import { isValidRunId, isValidTenant, latestKey, runKeys } from '../keys.js'
import { decodeLatest, type LatestRecord } from '../items/latest-record.js'
import { loadItem } from '../items/item-codec.js'
import type { LatestForecast } from '../../runs/contract.js'

/**
 * Reads of many SKUs' current published forecasts at once, for the bulk
 * export: a scan of the tenant's `latest` hash, or the records of given SKUs,
 * then the items those records point at, one HMGET per run.
 */
export class PublishedReads {
  constructor(
    private readonly redis: RedisClient,
    private readonly prefix: string,
  ) {}

  /**
   * One HSCAN step over the tenant's latest records: the SKUs with their records
   * (an undecodable record is left out), and the cursor of the next step ('0'
   * once the scan is done). HSCAN may return a SKU twice; the caller de-duplicates.
   */
  async scanLatest(tenant: string, cursor: string, count: number): Promise<{ records: [string, LatestRecord][]; cursor: string }> {
    if (!isValidTenant(tenant)) return { records: [], cursor: '0' }
    const [next, flat] = await this.redis.hscan(latestKey(this.prefix, tenant), cursor, 'COUNT', count)
    const records: [string, LatestRecord][] = []
    for (let i = 0; i + 1 < flat.length; i += 2) {
      const record = decodeLatest(flat[i + 1]!)
      if (record !== null) records.push([flat[i]!, record])
    }
    return { records, cursor: next }
  }

  /** The latest records of these SKUs (null where none), one HMGET. */
  async latestRecords(tenant: string, skus: readonly string[]): Promise<(LatestRecord | null)[]> {
    if (skus.length === 0 || !isValidTenant(tenant)) return skus.map(() => null)
    const values = await this.redis.hmget(latestKey(this.prefix, tenant), ...skus)
    return values.map((v) => (v === null ? null : decodeLatest(v)))
  }

  /**
   * latest() of many SKUs from their records: one HMGET of items per run the records
   * name, all in flight at once (each run's items lie on its own cluster slot). Null
   * where the run's results have expired, in the order given.
   */
  async latestOf(tenant: string, records: readonly (readonly [string, LatestRecord])[]): Promise<(LatestForecast | null)[]> {
    const byRun = new Map<string, number[]>()
    records.forEach(([, r], i) => {
      const at = byRun.get(r.runId)
      if (at) at.push(i)
      else byRun.set(r.runId, [i])
    })
    const out: (LatestForecast | null)[] = records.map(() => null)
    await Promise.all(
      [...byRun].map(async ([runId, at]) => {
        if (!isValidRunId(runId)) return
        const stored = await this.redis.hmgetBuffer(runKeys(this.prefix, tenant, runId).items, ...at.map((i) => records[i]![0]))
        at.forEach((i, k) => {
          const value = stored[k]
          const [sku, record] = records[i]!
          if (value != null) out[i] = { runId, producedAt: record.producedAt, item: loadItem(sku, value) }
        })
      }),
    )
    return out
  }
}
