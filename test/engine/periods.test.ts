import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { EngineInputError } from '../../src/engine/errors.js'
import {
  civilFromDays,
  daysFromCivil,
  formatPeriod,
  isoWeeksInYear,
  nextPeriods,
  parsePeriod,
  periodLabels,
} from '../../src/engine/periods.js'
import type { Frequency } from '../../src/engine/types.js'

// Source: base R 4.2.2 format.Date(x, "%G-W%V") and "%V" of 28 December; script make.R beside the JSON.
const fixture = JSON.parse(readFileSync(new URL('./fixtures/r-front/front.json', import.meta.url), 'utf8')) as {
  isoWeeks: { days: string[]; weeks: string[] }
  weeksInYear: { years: number[]; weeks: number[] }
}

function codeOf(fn: () => unknown): string | undefined {
  try {
    fn()
  } catch (err) {
    if (err instanceof EngineInputError) return `${err.code}:${err.field}`
    throw err
  }
  return undefined
}

describe('periodLabels', () => {
  it('numbers periods from 1 without a start', () => {
    expect(periodLabels('month', undefined, 3)).toEqual(['1', '2', '3'])
    expect(periodLabels('week', undefined, 2, 10)).toEqual(['11', '12'])
  })

  it('rejects malformed starts and starts of another frequency', () => {
    const bad: [Frequency, string][] = [
      ['month', '2024-13'],
      ['month', '2024-00'],
      ['month', '2024-Q2'],
      ['quarter', '2024-Q5'],
      ['quarter', '2024-03'],
      ['day', '2023-02-29'],
      ['day', '2024-04-31'],
      ['day', '2024-03'],
      ['week', '2021-W53'],
      ['week', '2024-W00'],
      ['week', '2024-03-05'],
      ['year', '2024-01'],
      ['year', '0000'],
      ['month', ' 2024-03'],
    ]
    for (const [frequency, start] of bad) {
      expect(codeOf(() => periodLabels(frequency, start, 1)), `${frequency} ${start}`).toBe('invalid-period:firstPeriod')
    }
  })

  it('steps months and quarters across year ends', () => {
    expect(periodLabels('month', '2024-11', 4)).toEqual(['2024-11', '2024-12', '2025-01', '2025-02'])
    expect(periodLabels('quarter', '2024-Q3', 3)).toEqual(['2024-Q3', '2024-Q4', '2025-Q1'])
    expect(periodLabels('year', '2024', 2)).toEqual(['2024', '2025'])
  })

  it('steps days through leap days and century rules', () => {
    expect(periodLabels('day', '2024-02-28', 3)).toEqual(['2024-02-28', '2024-02-29', '2024-03-01'])
    expect(periodLabels('day', '2100-02-28', 2)).toEqual(['2100-02-28', '2100-03-01']) // 2100 is not a leap year
    expect(periodLabels('day', '2000-02-28', 2)).toEqual(['2000-02-28', '2000-02-29']) // 2000 is
  })

  it('steps ISO weeks through 53-week years', () => {
    // 2020 has 53 ISO weeks (it starts on a Wednesday in a leap year); 2021 has 52.
    expect(periodLabels('week', '2020-W52', 3)).toEqual(['2020-W52', '2020-W53', '2021-W01'])
    expect(periodLabels('week', '2021-W52', 2)).toEqual(['2021-W52', '2022-W01'])
  })

  it('applies an offset (trimmed leading periods)', () => {
    expect(periodLabels('month', '2024-01', 2, 13)).toEqual(['2025-02', '2025-03'])
  })

  it('refuses to go past year 9999', () => {
    expect(codeOf(() => periodLabels('year', '9999', 2))).toBe('invalid-period:firstPeriod')
  })
})

describe('nextPeriods', () => {
  it('lists the periods after a label', () => {
    expect(nextPeriods('2024-12', 'month', 2)).toEqual(['2025-01', '2025-02'])
    expect(nextPeriods('2024-12-31', 'day', 1)).toEqual(['2025-01-01'])
  })
})

describe('calendar arithmetic', () => {
  it('round-trips day numbers', () => {
    expect(daysFromCivil(1970, 1, 1)).toBe(0)
    expect(daysFromCivil(2000, 3, 1)).toBe(11017) // 30 years incl. 7 leap days + Jan/Feb 2000
    for (let d = -800_000; d < 3_000_000; d += 997) {
      const c = civilFromDays(d)
      expect(daysFromCivil(c.year, c.month, c.day)).toBe(d)
    }
  })

  it('parses and formats every label of each frequency consistently', () => {
    for (const f of ['day', 'week', 'month', 'quarter', 'year'] as const) {
      const first = parsePeriod(periodLabels(f, { day: '1999-12-20', week: '1998-W50', month: '1999-01', quarter: '1999-Q1', year: '1999' }[f], 1)[0]!, f)
      for (let k = 0; k < 400; k++) expect(parsePeriod(formatPeriod(first + k, f), f)).toBe(first + k)
    }
  })
})

describe('ISO weeks against R', () => {
  it('labels the week of each day around every new year 1990-2040 as R does', () => {
    const { days, weeks } = fixture.isoWeeks
    expect(days.length).toBeGreaterThan(800)
    days.forEach((day, i) => {
      const dayNumber = parsePeriod(day, 'day')
      // Week ordinals count Mondays from 1970-01-05 (a Monday), so the week holding a day is floor((day - 4) / 7).
      expect(formatPeriod(Math.floor((dayNumber - 4) / 7), 'week'), day).toBe(weeks[i])
      // And the label parses back to a week whose Monday is at most 6 days before the day.
      const monday = parsePeriod(weeks[i]!, 'week') * 7 + 4
      expect(dayNumber - monday).toBeGreaterThanOrEqual(0)
      expect(dayNumber - monday).toBeLessThan(7)
    })
  })

  it('gives 52 or 53 weeks per year as R does', () => {
    fixture.weeksInYear.years.forEach((year, i) => {
      expect(isoWeeksInYear(year), String(year)).toBe(fixture.weeksInYear.weeks[i])
    })
  })
})
