import { formatPeriod, parsePeriod } from '../engine/index.js'
import { MAX_POINTS_PER_SERIES } from '../schemas/run.js'
import { lastPeriodOf } from './period-range.js'
import type { HistoryData, IncomingHistory, UploadMode } from './types.js'

/**
 * The history to store for one SKU, from what is stored and what arrived.
 *
 *  - replace: the incoming periods become the whole history (its frequency may change).
 *  - append: the stored and incoming periods are combined; where both have a
 *    period the incoming value wins, except an incoming null (missing), which
 *    leaves the stored value. Periods between the two ranges become 0.
 *    The frequencies must match.
 *
 * Tags: incoming tags replace the stored ones; absent, the stored tags stay.
 * @returns the merged history, or why the SKU is refused (the stored history then stays as it was),
 *   e.g. when it would end after year 9999
 */
export function mergeHistory(
  current: HistoryData | null,
  incoming: IncomingHistory,
  mode: UploadMode,
): { data: HistoryData } | { reason: string } {
  const merged = mergeRanges(current, incoming, mode)
  if ('reason' in merged) return merged
  const { frequency, firstPeriod, demand } = merged.data
  const last = lastPeriodOf(parsePeriod(firstPeriod, frequency), demand.length, frequency)
  return 'reason' in last ? last : merged
}

function mergeRanges(
  current: HistoryData | null,
  incoming: IncomingHistory,
  mode: UploadMode,
): { data: HistoryData } | { reason: string } {
  const tags = incoming.tags ?? current?.tags ?? []
  try {
    if (mode === 'replace' || current === null) {
      if (incoming.demand.length > MAX_POINTS_PER_SERIES) return tooLong(incoming.demand.length)
      return {
        data: {
          frequency: incoming.frequency,
          firstPeriod: formatPeriod(incoming.startOrdinal, incoming.frequency),
          demand: incoming.demand,
          tags,
        },
      }
    }
    if (current.frequency !== incoming.frequency) {
      return {
        reason: `stored history is by ${current.frequency}, this upload by ${incoming.frequency}; use mode=replace to change the frequency`,
      }
    }
    const frequency = current.frequency
    const currentStart = parsePeriod(current.firstPeriod, frequency)
    const lo = Math.min(currentStart, incoming.startOrdinal)
    const hi = Math.max(currentStart + current.demand.length, incoming.startOrdinal + incoming.demand.length) - 1
    if (hi - lo + 1 > MAX_POINTS_PER_SERIES) return tooLong(hi - lo + 1)
    const demand = new Array<number | null>(hi - lo + 1).fill(0)
    current.demand.forEach((v, i) => {
      demand[currentStart - lo + i] = v
    })
    incoming.demand.forEach((v, i) => {
      if (v !== null) demand[incoming.startOrdinal - lo + i] = v
    })
    return { data: { frequency, firstPeriod: formatPeriod(lo, frequency), demand, tags } }
  } catch (err) {
    return { reason: (err as Error).message }
  }
}

function tooLong(n: number): { reason: string } {
  return { reason: `the history would hold ${n} periods; at most ${MAX_POINTS_PER_SERIES}` }
}
