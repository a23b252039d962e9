import { formatPeriod, parsePeriod, type Frequency } from '../engine/index.js'

/**
 * Place a period cell of an upload into a bucket of the target frequency.
 *
 * Accepted cells:
 *  - a date `2024-03-05` (a time after it, `2024-03-05T10:00:00Z` or
 *    `2024-03-05 10:00`, is ignored: the date is taken as written, no time
 *    zone conversion) -> its day, ISO week, month, quarter or year;
 *  - a period label of the target frequency or of a finer one that nests in
 *    it: `2024-03` into month, quarter or year; `2024-Q2` into quarter or year;
 *    `2024-W09` into week only (weeks do not nest in months); `2024` into year.
 *
 * Week buckets are ISO-8601 weeks (Monday first; week 1 holds the year's
 * first Thursday), so 2021-01-03 falls in 2020-W53.
 * @returns the bucket's period ordinal (as engine/periods.ts numbers them) and whether the cell was a
 * date (a transaction row) rather than a period label (a period total), or why the cell is refused
 */
export function bucketOf(cell: string, target: Frequency): { ordinal: number; dated: boolean } | { reason: string } {
  const text = cell.trim()
  const date = /^(\d{4})-(\d{2})-(\d{2})(?:[T ].*)?$/.exec(text)
  try {
    if (date) {
      const year = Number(date[1])
      const month = Number(date[2])
      const day = parsePeriod(`${date[1]}-${date[2]}-${date[3]}`, 'day')
      switch (target) {
        case 'day':
          return { ordinal: day, dated: true }
        case 'week':
          // Day 4 (1970-01-05) was a Monday; week ordinals count Mondays from there.
          return { ordinal: Math.floor((day - 4) / 7), dated: true }
        case 'month':
          return { ordinal: year * 12 + month - 1, dated: true }
        case 'quarter':
          return { ordinal: year * 4 + Math.floor((month - 1) / 3), dated: true }
        case 'year':
          return { ordinal: year, dated: true }
      }
    }
    const kind = labelKind(text)
    if (kind === null) {
      return { reason: `period ${JSON.stringify(cell)} is not a date (2024-03-05) or a period label (2024-03, 2024-W09, 2024-Q2, 2024)` }
    }
    const ordinal = parsePeriod(text, kind)
    const nested = convert(ordinal, kind, target)
    if (nested === null) return { reason: `a ${kind} period (${text}) cannot be placed in ${target} buckets` }
    return { ordinal: nested, dated: false }
  } catch (err) {
    return { reason: `period ${JSON.stringify(cell)} is not valid: ${(err as Error).message}` }
  }
}

function labelKind(text: string): Frequency | null {
  if (/^\d{4}-\d{2}$/.test(text)) return 'month'
  if (/^\d{4}-W\d{2}$/.test(text)) return 'week'
  if (/^\d{4}-Q\d$/.test(text)) return 'quarter'
  if (/^\d{4}$/.test(text)) return 'year'
  return null
}

/** Ordinal of a coarser bucket holding the period, or null when it does not nest. */
function convert(ordinal: number, from: Frequency, to: Frequency): number | null {
  if (from === to) return ordinal
  if (from === 'month' && to === 'quarter') return Math.floor(ordinal / 3)
  if (from === 'month' && to === 'year') return Math.floor(ordinal / 12)
  if (from === 'quarter' && to === 'year') return Math.floor(ordinal / 4)
  return null
}

const CALENDAR_DATE = /^\d{4}-\d{2}-\d{2}$/

/**
 * The first-period label to store and forecast with: for weekly demand a
 * calendar date (2024-03-05) means its ISO week (2024-W10); any other label is
 * kept as given (the engine checks it against the frequency).
 */
export function firstPeriodLabel(label: string, frequency: Frequency): string {
  if (frequency !== 'week' || !CALENDAR_DATE.test(label)) return label
  const bucket = bucketOf(label, 'week')
  return 'ordinal' in bucket ? formatPeriod(bucket.ordinal, 'week') : label
}
