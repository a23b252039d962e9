/**
 * Period labels as the API writes them: day 2024-03-05, week 2024-W09 (ISO week),
 * month 2024-03, quarter 2024-Q2, year 2024. The history resource gives the first
 * label and a count; the chart needs every label.
 */

const DAY_MS = 86_400_000

function isoDay(ms: number): string {
  return new Date(ms).toISOString().slice(0, 10)
}

/** Monday (UTC ms) of ISO week `week` of ISO year `year`. */
function isoWeekMonday(year: number, week: number): number {
  const jan4 = Date.UTC(year, 0, 4)
  const jan4Weekday = (new Date(jan4).getUTCDay() + 6) % 7 // Monday 0
  return jan4 - jan4Weekday * DAY_MS + (week - 1) * 7 * DAY_MS
}

function isoWeekLabel(ms: number): string {
  const d = new Date(ms)
  const weekday = (d.getUTCDay() + 6) % 7
  const thursday = ms - weekday * DAY_MS + 3 * DAY_MS
  const year = new Date(thursday).getUTCFullYear()
  const week = Math.floor((thursday - isoWeekMonday(year, 1)) / (7 * DAY_MS)) + 1
  return `${year}-W${String(week).padStart(2, '0')}`
}

/** `count` labels starting at `first`; null when the label does not fit the frequency. */
export function periodLabels(frequency: string, first: string, count: number): string[] | null {
  const out: string[] = []
  let m: RegExpExecArray | null
  if (frequency === 'month' && (m = /^(\d{4})-(\d{2})$/.exec(first))) {
    const start = Number(m[1]) * 12 + Number(m[2]) - 1
    for (let i = 0; i < count; i++) {
      const t = start + i
      out.push(`${Math.floor(t / 12)}-${String((t % 12) + 1).padStart(2, '0')}`)
    }
    return out
  }
  if (frequency === 'quarter' && (m = /^(\d{4})-Q([1-4])$/.exec(first))) {
    const start = Number(m[1]) * 4 + Number(m[2]) - 1
    for (let i = 0; i < count; i++) out.push(`${Math.floor((start + i) / 4)}-Q${((start + i) % 4) + 1}`)
    return out
  }
  if (frequency === 'year' && (m = /^(\d{4})$/.exec(first))) {
    for (let i = 0; i < count; i++) out.push(String(Number(m[1]) + i))
    return out
  }
  if (frequency === 'week' && (m = /^(\d{4})-W(\d{2})$/.exec(first))) {
    const monday = isoWeekMonday(Number(m[1]), Number(m[2]))
    for (let i = 0; i < count; i++) out.push(isoWeekLabel(monday + i * 7 * DAY_MS))
    return out
  }
  if (frequency === 'day' && (m = /^(\d{4})-(\d{2})-(\d{2})$/.exec(first))) {
    const start = Date.UTC(Number(m[1]), Number(m[2]) - 1, Number(m[3]))
    for (let i = 0; i < count; i++) out.push(isoDay(start + i * DAY_MS))
    return out
  }
  return null
}
