import { z } from 'zod'
import { FREQUENCIES, parsePeriod, type Frequency } from '../engine/index.js'
import { DemandValue, MAX_POINTS_PER_SERIES, PeriodLabel, Sku, StockPolicy } from '../schemas/run.js'
import { firstPeriodLabel } from './buckets.js'
import { normaliseTags } from './tags.js'
import { fieldIssues, formatFieldPath } from '../errors.js'
import type { IncomingHistory } from './types.js'

/** One whole series of a JSON or NDJSON upload: `{ sku, frequency?, firstPeriod, demand, tags?, replenishment? }`. */
export const UploadSeries = z.object({
  sku: Sku,
  frequency: z.enum(FREQUENCIES).optional(),
  firstPeriod: PeriodLabel,
  demand: z.array(DemandValue).min(1).max(MAX_POINTS_PER_SERIES),
  tags: z.array(z.string()).optional(),
  replenishment: StockPolicy.optional(),
}).strict()

/**
 * Validate one series object. `frequency` defaults to the upload's.
 * @returns the SKU and its incoming history, or the first offending field and why
 */
export function parseUploadSeries(
  value: unknown,
  defaultFrequency: Frequency,
): { sku: string; incoming: IncomingHistory } | { sku?: string; column: string; reason: string } {
  const parsed = UploadSeries.safeParse(value)
  const sku = typeof (value as { sku?: unknown })?.sku === 'string' ? (value as { sku: string }).sku : undefined
  if (!parsed.success) {
    const issue = fieldIssues(parsed.error.issues)[0]!
    return { ...(sku === undefined ? {} : { sku }), column: formatFieldPath(issue.path, '(item)'), reason: issue.message }
  }
  const s = parsed.data
  const frequency = s.frequency ?? defaultFrequency
  let startOrdinal: number
  try {
    startOrdinal = parsePeriod(firstPeriodLabel(s.firstPeriod, frequency), frequency)
  } catch (err) {
    return { sku: s.sku, column: 'firstPeriod', reason: (err as Error).message }
  }
  let tags: string[] | undefined
  if (s.tags !== undefined) {
    const t = normaliseTags(s.tags)
    if ('reason' in t) return { sku: s.sku, column: 'tags', reason: t.reason }
    tags = t.tags
  }
  const policy = s.replenishment === undefined ? {} : { replenishment: s.replenishment }
  return { sku: s.sku, incoming: { frequency, startOrdinal, demand: s.demand, ...(tags === undefined ? {} : { tags }), ...policy } }
}
