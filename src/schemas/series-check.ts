import { FREQUENCIES } from '../engine/index.js'
import { MAX_ABS_VALUE, MAX_POINTS_PER_SERIES, PERIOD_PATTERN, SKU_PATTERN, RunSubmission, type SeriesItem } from './run.js'

/**
 * A fast test that `x` is a SeriesItem exactly as the zod schema would output
 * it: true only when SeriesItem.parse(x) would succeed and return an equal
 * object (so no unknown keys, which zod would strip). Anything else answers
 * false and the caller runs the schema, which gives the same result or the
 * same errors as always. Zod checks each of a run's values through its
 * generic check pipeline, which showed in the API's profile under bench:e2e
 * (figures: bench/RESULTS.md, "Figures behind choices in the code"); this
 * loop costs a small fraction of that.
 */
export function isSeriesItem(x: unknown): x is SeriesItem {
  if (typeof x !== 'object' || x === null || Array.isArray(x)) return false
  let keys = 0
  for (const k in x) {
    if (!Object.prototype.hasOwnProperty.call(x, k)) return false
    if (k !== 'sku' && k !== 'demand' && k !== 'firstPeriod' && k !== 'frequency' && k !== 'seasonLength') return false
    keys++
  }
  const o = x as Record<string, unknown>
  const { sku, demand, firstPeriod, frequency, seasonLength } = o
  if (typeof sku !== 'string' || sku.length < 1 || sku.length > 200 || !SKU_PATTERN.test(sku)) return false
  if (!Array.isArray(demand) || demand.length < 1 || demand.length > MAX_POINTS_PER_SERIES) return false
  for (let i = 0; i < demand.length; i++) {
    const v: unknown = demand[i]
    if (v === null) continue
    if (typeof v !== 'number' || !(v >= -MAX_ABS_VALUE && v <= MAX_ABS_VALUE)) return false
  }
  let present = 2
  if ('firstPeriod' in o) {
    if (typeof firstPeriod !== 'string' || !PERIOD_PATTERN.test(firstPeriod)) return false
    present++
  }
  if ('frequency' in o) {
    if (!(FREQUENCIES as readonly unknown[]).includes(frequency)) return false
    present++
  }
  if ('seasonLength' in o) {
    if (typeof seasonLength !== 'number' || !Number.isInteger(seasonLength) || seasonLength < 1 || seasonLength > 366) return false
    present++
  }
  return keys === present
}

/** True when every element passes isSeriesItem and no two share a SKU. */
export function areUniqueSeriesItems(xs: readonly unknown[]): xs is SeriesItem[] {
  const seen = new Set<string>()
  for (const x of xs) {
    if (!isSeriesItem(x) || seen.has(x.sku)) return false
    seen.add(x.sku)
  }
  return true
}

/** A valid series item standing in for a run's series while the schema checks the rest of the body. */
const STAND_IN: SeriesItem = { sku: 'x', demand: [0] }

/**
 * RunSubmission.safeParse(body) for a body with inline series, with the series
 * checked by isSeriesItem instead of zod; null when the fast path does not
 * apply (no series, or any series it cannot vouch for), and the caller then
 * parses the whole body with the schema. The rest of the body still goes
 * through the schema (defaults, settings, the one-source rule) with one
 * stand-in series, and the result carries the body's own series array, which
 * zod would have returned equal.
 */
export function parseRunSubmissionFast(body: unknown): RunSubmission | null {
  if (typeof body !== 'object' || body === null) return null
  const series = (body as { series?: unknown }).series
  if (!Array.isArray(series) || series.length === 0 || !areUniqueSeriesItems(series)) return null
  const rest = RunSubmission.safeParse({ ...body, series: [STAND_IN] })
  return rest.success ? { ...rest.data, series } : null
}
