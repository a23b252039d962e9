import { describe, expect, it } from 'vitest'
import { FREQUENCIES, periodLabels } from '../../../src/engine/index.js'
import { decodeLatest, decodePoints, encodePoints, recordTail } from '../../../src/storage/items/latest-record.js'

const points = (labels: readonly string[], value = (i: number) => 10 + i) => labels.map((period, i) => ({ period, demand: value(i) }))

describe('latest-forecast record points', () => {
  // Spans chosen to cross the calendar's irregular spots: the leap day of 2024 and the
  // year end (day), ISO 8601's 53-week year 2026 (week: 2026-W53 exists because 1 January
  // 2026 is a Thursday), year ends (month, quarter) and the 9999 limit (year).
  const cases: Record<(typeof FREQUENCIES)[number], [string, number]> = {
    day: ['2024-02-27', 400],
    week: ['2026-W50', 60],
    month: ['2025-11', 30],
    quarter: ['2025-Q3', 10],
    year: ['9990', 10],
  }

  for (const frequency of FREQUENCIES) {
    it(`stores consecutive ${frequency} labels as the first label and regenerates them`, () => {
      const [start, count] = cases[frequency]
      const labels = periodLabels(frequency, start, count)
      const encoded = encodePoints(points(labels))
      expect(encoded.startsWith(`${frequency[0]}:${start}:`)).toBe(true)
      expect(encoded).not.toContain(labels[1])
      expect([...decodePoints(encoded).keys()]).toEqual(labels)
    })
  }

  it('covers the leap day and the 53rd ISO week in those spans', () => {
    expect([...decodePoints(encodePoints(points(periodLabels('day', '2024-02-27', 4)))).keys()]).toContain('2024-02-29')
    expect([...decodePoints(encodePoints(points(periodLabels('week', '2026-W52', 3)))).keys()]).toEqual([
      '2026-W52',
      '2026-W53',
      '2027-W01',
    ])
  })

  it('stores period numbers (series without a start) as the first number', () => {
    const labels = periodLabels('month', undefined, 12, 60)
    const encoded = encodePoints(points(labels))
    expect(encoded.startsWith('n:61:')).toBe(true)
    expect([...decodePoints(encoded).keys()]).toEqual(labels)
  })

  it('keeps every label when they are not consecutive', () => {
    for (const labels of [['2026-01', '2026-03'], ['A', 'B'], ['2026-Q1', '2026-05'], ['0999', '1000'].reverse()]) {
      const decoded = decodePoints(encodePoints(points(labels)))
      expect([...decoded.keys()]).toEqual(labels)
    }
    expect(decodePoints(encodePoints([])).size).toBe(0)
  })

  it('keeps values to 7 significant digits and drops values that are not finite', () => {
    const values = [123.456789, -0.000123456789, 98765432.1, 0, 1e-300, NaN, Infinity]
    for (const labels of [periodLabels('month', '2026-01', values.length), ['x', 'y', 'z', 'u', 'v', 'w', 't']]) {
      const decoded = decodePoints(encodePoints(points(labels, (i) => values[i]!)))
      expect([...decoded.values()]).toEqual([123.4568, -0.0001234568, 98765430, 0, 1e-300])
      expect(decoded.has(labels[5]!)).toBe(false)
    }
  })

  it('is smaller than the labels and values as JSON', () => {
    const forecast = points(periodLabels('month', '2026-01', 12), (i) => 1000 / 3 + i / 7)
    const json = JSON.stringify([forecast.map((p) => p.period), forecast.map((p) => p.demand)])
    expect(encodePoints(forecast).length).toBeLessThan(json.length / 2)
  })

  it('refuses points it did not write', () => {
    expect(() => decodePoints('z:2026-01:1,2')).toThrow()
    expect(() => decodePoints('m:2026-13:1,2')).toThrow()
    expect(() => decodePoints('m2026-01')).toThrow()
  })
})

describe('latest-forecast records', () => {
  it('reads a record with points', () => {
    const value = `1767225600000|run-2|${recordTail('2026-01-01T00:00:05.000Z', encodePoints(points(['2026-02', '2026-03'])))}`
    const r = decodeLatest(value)
    expect(r).toMatchObject({ createdAtMs: 1767225600000, runId: 'run-2', producedAt: '2026-01-01T00:00:05.000Z' })
    expect([...decodePoints(r!.points!)]).toEqual([
      ['2026-02', 10],
      ['2026-03', 11],
    ])
  })

  it('answers null for malformed records', () => {
    for (const v of ['', 'x', '1|run', '1|run|2026', 'x|run|2026|m:2026-01:1', '1|bad}id|2026|m:2026-01:1', '1|run||m:2026-01:1']) expect(decodeLatest(v)).toBeNull()
  })
})
