/**
 * Period labels: parse a label into an integer ordinal per frequency and back.
 *
 *  - day      `2024-03-05`  ordinal = days since 1970-01-01 (proleptic Gregorian)
 *  - week     `2024-W09`    ISO-8601 week: Monday-based, week 1 holds the year's first
 *                           Thursday, so years have 52 or 53 weeks; ordinal = Monday's day / 7
 *  - month    `2024-03`     ordinal = year * 12 + month - 1
 *  - quarter  `2024-Q2`     ordinal = year * 4 + quarter - 1
 *  - year     `2024`        ordinal = year
 *
 * Years run 0001..9999. Pure integer arithmetic (no Date, no time zone).
 */
import { EngineInputError } from './errors.js'
import type { Frequency } from './types.js'

const MIN_YEAR = 1
const MAX_YEAR = 9999

/** Days since 1970-01-01 of a proleptic Gregorian date (H. Hinnant's days_from_civil). */
export function daysFromCivil(year: number, month: number, day: number): number {
  const y = month <= 2 ? year - 1 : year
  const era = Math.floor(y / 400)
  const yoe = y - era * 400
  const mp = (month + 9) % 12
  const doy = Math.floor((153 * mp + 2) / 5) + day - 1
  const doe = yoe * 365 + Math.floor(yoe / 4) - Math.floor(yoe / 100) + doy
  return era * 146097 + doe - 719468
}

/** Inverse of daysFromCivil (H. Hinnant's civil_from_days). */
export function civilFromDays(days: number): { year: number; month: number; day: number } {
  const z = days + 719468
  const era = Math.floor(z / 146097)
  const doe = z - era * 146097
  const yoe = Math.floor((doe - Math.floor(doe / 1460) + Math.floor(doe / 36524) - Math.floor(doe / 146096)) / 365)
  const doy = doe - (365 * yoe + Math.floor(yoe / 4) - Math.floor(yoe / 100))
  const mp = Math.floor((5 * doy + 2) / 153)
  const day = doy - Math.floor((153 * mp + 2) / 5) + 1
  const month = mp < 10 ? mp + 3 : mp - 9
  return { year: yoe + era * 400 + (month <= 2 ? 1 : 0), month, day }
}

/** ISO weekday, Monday = 1 .. Sunday = 7 (1970-01-01 was a Thursday). */
function isoWeekday(days: number): number {
  return ((((days + 3) % 7) + 7) % 7) + 1
}

/** Day number of the Monday of ISO week 1 of `year` (the week holding 4 January). */
function isoWeekOneMonday(year: number): number {
  const jan4 = daysFromCivil(year, 1, 4)
  return jan4 - (isoWeekday(jan4) - 1)
}

/** ISO year and week of a day number. */
function isoWeekOf(days: number): { year: number; week: number } {
  const thursday = days - (isoWeekday(days) - 1) + 3
  const year = civilFromDays(thursday).year
  return { year, week: Math.floor((thursday - daysFromCivil(year, 1, 1)) / 7) + 1 }
}

/** 52 or 53: the ISO week that holds 28 December is the year's last. */
export function isoWeeksInYear(year: number): number {
  return isoWeekOf(daysFromCivil(year, 12, 28)).week
}

function daysInMonth(year: number, month: number): number {
  return month === 12 ? 31 : daysFromCivil(year, month + 1, 1) - daysFromCivil(year, month, 1)
}

const PATTERNS: Readonly<Record<Frequency, RegExp>> = {
  day: /^(\d{4})-(\d{2})-(\d{2})$/,
  week: /^(\d{4})-W(\d{2})$/,
  month: /^(\d{4})-(\d{2})$/,
  quarter: /^(\d{4})-Q(\d)$/,
  year: /^(\d{4})$/,
}

const EXAMPLES: Readonly<Record<Frequency, string>> = {
  day: '2024-03-05',
  week: '2024-W09',
  month: '2024-03',
  quarter: '2024-Q2',
  year: '2024',
}

function invalid(label: string, frequency: Frequency, why: string): EngineInputError {
  return new EngineInputError(
    'invalid-period',
    `firstPeriod "${label}" is not a valid ${frequency} label (${why}; expected like ${EXAMPLES[frequency]})`,
    'firstPeriod',
  )
}

/**
 * Integer ordinal of a period label for the frequency.
 * @throws EngineInputError('invalid-period', field 'firstPeriod') on a malformed label,
 *   an out-of-range part, or a label of another frequency.
 */
export function parsePeriod(label: string, frequency: Frequency): number {
  const match = PATTERNS[frequency].exec(label)
  if (!match) throw invalid(label, frequency, 'wrong format for this frequency')
  const year = Number(match[1])
  if (year < MIN_YEAR) throw invalid(label, frequency, 'year must be 0001..9999')
  const part = match[2] === undefined ? 0 : Number(match[2])
  switch (frequency) {
    case 'year':
      return year
    case 'quarter':
      if (part < 1 || part > 4) throw invalid(label, frequency, 'quarter must be 1..4')
      return year * 4 + part - 1
    case 'month':
      if (part < 1 || part > 12) throw invalid(label, frequency, 'month must be 01..12')
      return year * 12 + part - 1
    case 'week': {
      const weeks = isoWeeksInYear(year)
      if (part < 1 || part > weeks) throw invalid(label, frequency, `ISO year ${match[1]} has weeks 01..${weeks}`)
      return (isoWeekOneMonday(year) + 7 * (part - 1) - MONDAY_OFFSET) / 7
    }
    case 'day': {
      const day = Number(match[3])
      if (part < 1 || part > 12) throw invalid(label, frequency, 'month must be 01..12')
      if (day < 1 || day > daysInMonth(year, part)) throw invalid(label, frequency, 'no such day in that month')
      return daysFromCivil(year, part, day)
    }
  }
}

/** 1970-01-05 (day 4) was a Monday: week ordinal = (monday - 4) / 7, an integer. */
const MONDAY_OFFSET = 4

const pad = (n: number, width: number): string => String(n).padStart(width, '0')

/** Label of an ordinal. @throws EngineInputError('invalid-period') beyond year 9999 or before 0001. */
export function formatPeriod(ordinal: number, frequency: Frequency): string {
  let year: number
  let label: string
  switch (frequency) {
    case 'year':
      year = ordinal
      label = pad(year, 4)
      break
    case 'quarter':
      year = Math.floor(ordinal / 4)
      label = `${pad(year, 4)}-Q${ordinal - year * 4 + 1}`
      break
    case 'month':
      year = Math.floor(ordinal / 12)
      label = `${pad(year, 4)}-${pad(ordinal - year * 12 + 1, 2)}`
      break
    case 'week': {
      const iso = isoWeekOf(ordinal * 7 + MONDAY_OFFSET)
      year = iso.year
      label = `${pad(year, 4)}-W${pad(iso.week, 2)}`
      break
    }
    case 'day': {
      const civil = civilFromDays(ordinal)
      year = civil.year
      label = `${pad(year, 4)}-${pad(civil.month, 2)}-${pad(civil.day, 2)}`
      break
    }
  }
  if (year < MIN_YEAR || year > MAX_YEAR) {
    throw new EngineInputError('invalid-period', `periods must stay within years 0001..9999`, 'firstPeriod')
  }
  return label
}

/**
 * Labels of `count` consecutive periods, the first `offset` periods after `start`.
 * Without `start` the labels are the 1-based period numbers (offset + 1, offset + 2, ...).
 */
export function periodLabels(
  frequency: Frequency,
  start: string | undefined,
  count: number,
  offset = 0,
): string[] {
  const labels: string[] = []
  if (start === undefined) {
    for (let i = 0; i < count; i++) labels.push(String(offset + i + 1))
    return labels
  }
  const first = parsePeriod(start, frequency) + offset
  for (let i = 0; i < count; i++) labels.push(formatPeriod(first + i, frequency))
  return labels
}

/** Labels of the `count` periods after `label`. */
export function nextPeriods(label: string, frequency: Frequency, count: number): string[] {
  return periodLabels(frequency, label, count, 1)
}
