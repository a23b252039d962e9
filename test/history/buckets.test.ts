import { describe, expect, it } from 'vitest'
import { formatPeriod } from '../../src/engine/index.js'
import { bucketOf } from '../../src/history/buckets.js'

const label = (cell: string, f: Parameters<typeof bucketOf>[1]) => {
  const b = bucketOf(cell, f)
  if ('reason' in b) throw new Error(b.reason)
  return formatPeriod(b.ordinal, f)
}

describe('bucketOf', () => {
  // Source: Python 3 datetime.date.fromisoformat(d).isocalendar() (ISO-8601 week dates), run once by hand:
  // 2020-12-28 -> (2020, 53), 2021-01-03 -> (2020, 53), 2021-01-04 -> (2021, 1),
  // 2024-12-29 -> (2024, 52), 2024-12-30 -> (2025, 1), 2025-01-05 -> (2025, 1).
  it.each([
    ['2020-12-28', '2020-W53'],
    ['2021-01-01', '2020-W53'],
    ['2021-01-03', '2020-W53'],
    ['2021-01-04', '2021-W01'],
    ['2024-12-29', '2024-W52'],
    ['2024-12-30', '2025-W01'],
    ['2025-01-05', '2025-W01'],
  ])('places %s in ISO week %s', (date, week) => {
    expect(label(date, 'week')).toBe(week)
  })

  it('places dates in days, months, quarters and years, ignoring a time part', () => {
    expect(label('2024-03-05', 'day')).toBe('2024-03-05')
    expect(label('2024-03-05T23:59:00Z', 'month')).toBe('2024-03')
    expect(label('2024-03-05 08:00', 'quarter')).toBe('2024-Q1')
    expect(label('2024-04-01', 'quarter')).toBe('2024-Q2')
    expect(label('2024-12-31', 'year')).toBe('2024')
  })

  it('nests coarser labels only where periods nest', () => {
    expect(label('2024-05', 'month')).toBe('2024-05')
    expect(label('2024-05', 'quarter')).toBe('2024-Q2')
    expect(label('2024-Q3', 'year')).toBe('2024')
    expect(label('2024-W09', 'week')).toBe('2024-W09')
    expect(bucketOf('2024-W09', 'month')).toEqual({ reason: 'a week period (2024-W09) cannot be placed in month buckets' })
    expect(bucketOf('2024-05', 'day')).toHaveProperty('reason')
  })

  it('refuses impossible dates and other formats with a reason', () => {
    expect(bucketOf('2023-02-29', 'month')).toHaveProperty('reason')
    expect(bucketOf('2024-13', 'month')).toHaveProperty('reason')
    expect(bucketOf('05/03/2024', 'month')).toHaveProperty('reason')
    expect(bucketOf('', 'month')).toHaveProperty('reason')
  })
})
