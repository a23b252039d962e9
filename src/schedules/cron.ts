import parser from 'cron-parser'
import type { FieldError } from '../errors.js'

/**
 * Checks of a schedule's timing. The pattern is what BullMQ's job schedulers
 * read (cron-parser: 5 fields, or 6 with seconds first); the time zone an IANA
 * name such as Europe/Berlin.
 */

export function isTimeZone(tz: string): boolean {
  try {
    new Intl.DateTimeFormat('en', { timeZone: tz })
    return true
  } catch {
    return false
  }
}

/**
 * @returns field errors (empty when fine). Firings closer than `minIntervalSeconds`
 * (checked over the next 10) are refused.
 */
export function checkTiming(cron: string, timeZone: string, minIntervalSeconds: number, now: Date): FieldError[] {
  if (!isTimeZone(timeZone)) return [{ path: 'timeZone', message: 'must be an IANA time zone such as Europe/Berlin or UTC' }]
  const fields = cron.trim().split(/\s+/).length
  if (fields < 5 || fields > 6) {
    return [{ path: 'cron', message: 'must have 5 fields (minute hour day-of-month month day-of-week) or 6 with seconds first' }]
  }
  let times: number[]
  try {
    const it = parser.parseExpression(cron, { tz: timeZone, currentDate: now })
    times = Array.from({ length: 10 }, () => it.next().getTime())
  } catch (err) {
    return [{ path: 'cron', message: `is not a valid cron pattern (${(err as Error).message})` }]
  }
  for (let i = 1; i < times.length; i++) {
    if ((times[i]! - times[i - 1]!) / 1000 < minIntervalSeconds) {
      return [{ path: 'cron', message: `fires more often than every ${minIntervalSeconds} seconds` }]
    }
  }
  return []
}

/** The next firing after `now`, ISO-8601; null if the pattern has none. */
export function nextFiring(cron: string, timeZone: string, now: Date): string | null {
  try {
    return parser.parseExpression(cron, { tz: timeZone, currentDate: now }).next().toDate().toISOString()
  } catch {
    return null
  }
}
