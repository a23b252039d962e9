/**
 * What the service keeps per SKU beside its history, each part forgotten by
 * the store that owns it. Deleting a SKU (DELETE /v1/skus/{sku}/history, or
 * idle-history retention) forgets all of them through forgetSkuRecords, so
 * both ways remove the same things.
 */
export interface SkuRecordStores {
  /** The latest and kept published forecasts, the worklist entry and the published summary (run-store.ts forgetLatest). */
  readonly forgetLatestForecast?: (tenant: string, sku: string) => Promise<void>
  /** Scored periods, accuracy summary, exception entry (accuracy-store.ts). */
  readonly forgetAccuracy?: (tenant: string, sku: string) => Promise<void>
  /** Adjustments in force and their value-added records (adjustment-service.ts). */
  readonly forgetAdjustments?: (tenant: string, sku: string) => Promise<void>
}

/** Forgets every record the SKU has besides its history (its history is deleted by the caller). */
export async function forgetSkuRecords(stores: SkuRecordStores, tenant: string, sku: string): Promise<void> {
  await Promise.all([
    stores.forgetLatestForecast?.(tenant, sku),
    stores.forgetAccuracy?.(tenant, sku),
    stores.forgetAdjustments?.(tenant, sku),
  ])
}
