import type { Frequency } from '../engine/index.js'
import { adjustPoints, type Adjustment, type AdjustmentView } from './adjustments.js'
import type { ForecastItem, LatestForecast } from './contract.js'

/**
 * The bulk export of every current published forecast (GET /v1/forecasts/published):
 * one row per SKU and forecast period, with the statistical demand, the
 * adjustment in force and the final demand, exactly as GET /v1/skus/{sku}/forecast
 * shows them, plus the run that made it and the SKU's replenishment figures for an
 * order placed in the period. Read in batches from a source; never the whole
 * export in memory.
 */

/** Replenishment figures of one row: the SKU's policy, and the figures for an order placed at the start of the row's period. */
export interface PublishedReplenishment {
  readonly leadTimePeriods: number
  readonly reviewPeriods: number
  readonly leadTimeSdPeriods: number
  readonly serviceLevel: number
  readonly minimumOrder: number
  readonly packSize: number
  readonly orderQuantity: number
  /** Null where the protection interval runs past the horizon. */
  readonly coverDemand: number | null
  readonly safetyStock: number | null
  readonly reorderPoint: number | null
}

export interface PublishedRow {
  readonly sku: string
  readonly frequency: Frequency
  readonly period: string
  /** The statistical point forecast. */
  readonly demand: number
  readonly adjustment: AdjustmentView | null
  /** demand with the adjustment in force applied; equal to demand when none. */
  readonly finalDemand: number
  readonly intervals: readonly { readonly level: number; readonly low: number; readonly high: number }[]
  readonly model: string
  readonly runId: string
  readonly producedAt: string
  /** Present only when the SKU's published forecast carries replenishment figures. */
  readonly replenishment?: PublishedReplenishment
}

export interface PublishedSource {
  /** The tenant's current published forecasts in batches, each SKU once. */
  batches(): AsyncIterable<readonly LatestForecast[]>
  /** The adjustments in force of these SKUs by period, in the order given. */
  inForce(skus: readonly string[]): Promise<readonly ReadonlyMap<string, Adjustment>[]>
}

function replenishmentAt(item: ForecastItem, period: string): PublishedReplenishment | undefined {
  const r = item.replenishment
  if (!r) return undefined
  const at = r.periods.find((p) => p.period === period)
  return {
    leadTimePeriods: r.leadTimePeriods,
    reviewPeriods: r.reviewPeriods,
    leadTimeSdPeriods: r.leadTimeSdPeriods,
    serviceLevel: r.serviceLevel,
    minimumOrder: r.minimumOrder,
    packSize: r.packSize,
    orderQuantity: r.orderQuantity,
    coverDemand: at?.coverDemand ?? null,
    safetyStock: at?.safetyStock ?? null,
    reorderPoint: at?.reorderPoint ?? null,
  }
}

/** The rows of one SKU's published forecast, adjusted. */
export function rowsOf(latest: LatestForecast & { readonly item: ForecastItem }, adjustments: ReadonlyMap<string, Adjustment>): PublishedRow[] {
  const { item } = latest
  return adjustPoints(item.forecast, adjustments).map((p) => {
    const replenishment = replenishmentAt(item, p.period)
    return {
      sku: item.sku,
      frequency: item.frequency,
      period: p.period,
      demand: p.demand,
      adjustment: p.adjustment,
      finalDemand: p.finalDemand,
      intervals: p.intervals,
      model: item.model,
      runId: latest.runId,
      producedAt: latest.producedAt,
      ...(replenishment === undefined ? {} : { replenishment }),
    }
  })
}

const isForecast = (l: LatestForecast): l is LatestForecast & { readonly item: ForecastItem } => !('failure' in l.item)

/** The export's rows, one batch of SKUs at a time, optionally only SKUs of one frequency. */
export async function* publishedRows(source: PublishedSource, filter: { readonly frequency?: Frequency }): AsyncGenerator<PublishedRow[]> {
  for await (const batch of source.batches()) {
    const kept = batch.filter(isForecast).filter((l) => filter.frequency === undefined || l.item.frequency === filter.frequency)
    if (kept.length === 0) continue
    const adjustments = await source.inForce(kept.map((l) => l.item.sku))
    yield kept.flatMap((l, i) => rowsOf(l, adjustments[i] ?? new Map()))
  }
}
