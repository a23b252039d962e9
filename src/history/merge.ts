import { formatPeriod, parsePeriod } from '../engine/index.js'
import { MAX_ABS_VALUE, MAX_POINTS_PER_SERIES } from '../schemas/run.js'
import { lastPeriodOf } from './period-range.js'
import type { HistoryData, IncomingHistory, UploadMode } from './types.js'

/**
 * The history to store for one SKU, from what is stored and what arrived.
 *
 *  - replace: the incoming periods become the whole history (its frequency may change).
 *  - overwrite (and replace-open-period, whose upload holds one period): the
 *    stored and incoming periods are combined; where both have a period the
 *    incoming value wins, except an incoming null (missing), which leaves the
 *    stored value.
 *  - add: as overwrite, but where both have a period the incoming quantity is
 *    added to the stored one (a null on either side counts as nothing).
 *
 * In every mode but replace, periods between the two ranges become 0 and the
 * frequencies must match.
 * Tags and the stock policy (replenishment): incoming ones replace the stored ones; absent, the stored ones stay.
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
  const policy = incoming.replenishment ?? current?.replenishment
  const withPolicy = (data: HistoryData): { data: HistoryData } => ({ data: policy === undefined ? data : { ...data, replenishment: policy } })
  try {
    if (mode === 'replace' || current === null) {
      if (incoming.demand.length > MAX_POINTS_PER_SERIES) return tooLong(incoming.demand.length)
      return withPolicy({
        frequency: incoming.frequency,
        firstPeriod: formatPeriod(incoming.startOrdinal, incoming.frequency),
        demand: incoming.demand,
        tags,
      })
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
    for (let i = 0; i < incoming.demand.length; i++) {
      const v = incoming.demand[i]
      if (v === null || v === undefined) continue
      const at = incoming.startOrdinal - lo + i
      const stored = demand[at] ?? null
      const next = mode === 'add' && stored !== null ? stored + v : v
      if (Math.abs(next) > MAX_ABS_VALUE) {
        return { reason: `${formatPeriod(lo + at, frequency)} would hold ${next}, larger than ${MAX_ABS_VALUE} in size` }
      }
      demand[at] = next
    }
    return withPolicy({ frequency, firstPeriod: formatPeriod(lo, frequency), demand, tags })
  } catch (err) {
    return { reason: (err as Error).message }
  }
}

/**
 * The stored history with one period set to 0: a SKU left out of a
 * month-to-date (replace-open-period) upload had no demand in that period so far.
 * @returns null when the history does not reach that period (nothing to change)
 */
export function zeroPeriod(current: HistoryData, ordinal: number): HistoryData | null {
  const at = ordinal - parsePeriod(current.firstPeriod, current.frequency)
  if (at < 0 || at >= current.demand.length) return null
  const demand = [...current.demand]
  demand[at] = 0
  return { ...current, demand }
}

function tooLong(n: number): { reason: string } {
  return { reason: `the history would hold ${n} periods; at most ${MAX_POINTS_PER_SERIES}` }
}
