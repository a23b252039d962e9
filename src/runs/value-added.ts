/**
 * Forecast value added (FVA), a term of the trade: did each step of the
 * forecasting process make the forecast better than the step before it? Here
 * the steps are the naive forecast (the last value known when the forecast was
 * made), the statistical forecast and the final forecast (with the planners'
 * adjustments). Each is scored by its mean absolute error (MAE) over the same
 * periods; the value added by a step is the error it removed, in demand units.
 * Pure: no I/O.
 */

/** One scored period: the three forecasts of it and what happened. */
export interface ValueAddedRecord {
  readonly period: string
  readonly runId: string
  readonly statisticalDemand: number
  readonly finalDemand: number
  readonly naiveDemand: number
  readonly actualDemand: number
  /** Author of the adjustment in force for the period; null when none was. */
  readonly author: string | null
}

export interface ValueAddedSummary {
  readonly scoredPeriods: number
  readonly adjustedPeriods: number
  readonly mae: { readonly statistical: number | null; readonly final: number | null; readonly naive: number | null }
  readonly valueAdded: { readonly adjustments: number | null; readonly statistical: number | null; readonly final: number | null }
  readonly adjustmentsBeatStatistical: boolean | null
  readonly statisticalBeatsNaive: boolean | null
  readonly finalBeatsNaive: boolean | null
}

function meanAbs(records: readonly ValueAddedRecord[], forecastOf: (r: ValueAddedRecord) => number): number | null {
  if (records.length === 0) return null
  let sum = 0
  for (const r of records) sum += Math.abs(r.actualDemand - forecastOf(r))
  return sum / records.length
}

const minus = (a: number | null, b: number | null) => (a === null || b === null ? null : a - b)
const less = (a: number | null, b: number | null) => (a === null || b === null ? null : a < b)

/**
 * MAE of the statistical, final and naive forecasts over `records`, the value
 * each step added, and whether it beat the one before (strictly lower MAE;
 * a tie is not a win). `adjustmentsBeatStatistical` is null when no period was adjusted.
 */
export function summariseValueAdded(records: readonly ValueAddedRecord[]): ValueAddedSummary {
  const statistical = meanAbs(records, (r) => r.statisticalDemand)
  const final = meanAbs(records, (r) => r.finalDemand)
  const naive = meanAbs(records, (r) => r.naiveDemand)
  const adjustedPeriods = records.filter((r) => r.author !== null).length
  return {
    scoredPeriods: records.length,
    adjustedPeriods,
    mae: { statistical, final, naive },
    valueAdded: { adjustments: minus(statistical, final), statistical: minus(naive, statistical), final: minus(naive, final) },
    adjustmentsBeatStatistical: adjustedPeriods === 0 ? null : less(final, statistical),
    statisticalBeatsNaive: less(statistical, naive),
    finalBeatsNaive: less(final, naive),
  }
}

/** summariseValueAdded of each author's adjusted periods, by author name. */
export function valueAddedByAuthor(records: readonly ValueAddedRecord[]): (ValueAddedSummary & { readonly author: string })[] {
  const groups = new Map<string, ValueAddedRecord[]>()
  for (const r of records) {
    if (r.author === null) continue
    const list = groups.get(r.author) ?? []
    list.push(r)
    groups.set(r.author, list)
  }
  return [...groups.entries()]
    .sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0))
    .map(([author, list]) => ({ author, ...summariseValueAdded(list) }))
}
