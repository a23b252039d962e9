import type { HistoryWriter } from './ingest.js'

/** What the SKU quota needs from the history store. */
export interface SkuCounter {
  count(tenant: string): Promise<number>
  missing(tenant: string, skus: readonly string[]): Promise<string[]>
}

export function skuQuotaReason(held: number, max: number): string {
  return `the tenant holds ${held} SKUs and may hold at most ${max} (QUOTA_SKUS_PER_TENANT); delete SKUs or raise the quota`
}

/**
 * A writer that creates new SKUs only while the tenant stays within `max`
 * stored SKUs; SKUs past the quota are refused in the upload report, each
 * with the reason, and SKUs already stored are updated as usual. The check is
 * per batch, not atomic across requests: concurrent uploads may each take the
 * last free places, overshooting by at most one batch each.
 */
export function withSkuQuota(writer: HistoryWriter, counter: SkuCounter, max: number): HistoryWriter {
  return {
    async apply(tenant, batch, merge, opts) {
      const fresh = new Set(await counter.missing(tenant, batch.map((p) => p.sku)))
      if (fresh.size === 0) return writer.apply(tenant, batch, merge, opts)
      const held = await counter.count(tenant)
      let room = Math.max(0, max - held)
      const allowed = batch.filter((p) => !fresh.has(p.sku) || room-- > 0)
      const written = await writer.apply(tenant, allowed, merge, opts)
      let next = 0
      return batch.map((p) => (allowed[next] === p ? written[next++]! : { reason: skuQuotaReason(held, max) }))
    },
    select: (tenant, scope, batchSize) => writer.select(tenant, scope, batchSize),
  }
}
