/**
 * Adjustments (a planner's overrides) of a SKU's forecast: the arithmetic that
 * turns a statistical point forecast and an adjustment into the final value.
 * Pure: no I/O. Stored apart from the statistical forecast (storage/adjustments).
 *
 * An adjustment holds either `setDemand` (the final demand is this value) or
 * `changePercent` (the final demand is the statistical one changed by this
 * percentage). It is tied to a SKU and a period, not to a run: a newer run's
 * forecast of that period is adjusted the same way, until the period passes
 * (the SKU's stored history contains it), when the adjustment expires.
 */

export type AdjustmentChange = { readonly setDemand: number } | { readonly changePercent: number }

/** An adjustment in force for one period of a SKU. */
export interface Adjustment {
  readonly period: string
  readonly change: AdjustmentChange
  readonly reason: string
  readonly author: string
  /** ISO-8601 time it was set. */
  readonly setAt: string
  /** The run whose forecast was current when it was set. */
  readonly runId: string
}

/** The final demand of a period: the statistical point forecast with the adjustment applied (none: unchanged). */
export function finalDemandOf(statisticalDemand: number, change: AdjustmentChange | null): number {
  if (change === null) return statisticalDemand
  if ('setDemand' in change) return change.setDemand
  return statisticalDemand * (1 + change.changePercent / 100)
}

/** True when two adjustments say the same thing (the same change, reason and author). */
export function sameAdjustment(a: Pick<Adjustment, 'change' | 'reason' | 'author'>, b: Pick<Adjustment, 'change' | 'reason' | 'author'>): boolean {
  const sameChange =
    'setDemand' in a.change
      ? 'setDemand' in b.change && a.change.setDemand === b.change.setDemand
      : 'changePercent' in b.change && a.change.changePercent === b.change.changePercent
  return sameChange && a.reason === b.reason && a.author === b.author
}

/** An adjustment as shown on a forecast point. */
export type AdjustmentView = AdjustmentChange & { readonly reason: string; readonly author: string; readonly setAt: string }

export function adjustmentView(a: Adjustment): AdjustmentView {
  return { ...a.change, reason: a.reason, author: a.author, setAt: a.setAt }
}

/**
 * The forecast points with `finalDemand` and `adjustment` added: adjustments of
 * periods the forecast does not have are left out (they wait for a forecast that has them).
 */
export function adjustPoints<P extends { readonly period: string; readonly demand: number }>(
  points: readonly P[],
  adjustments: ReadonlyMap<string, Adjustment>,
): (P & { finalDemand: number; adjustment: AdjustmentView | null })[] {
  return points.map((p) => {
    const a = adjustments.get(p.period) ?? null
    return { ...p, finalDemand: finalDemandOf(p.demand, a?.change ?? null), adjustment: a === null ? null : adjustmentView(a) }
  })
}
