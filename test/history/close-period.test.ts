import { describe, expect, it } from 'vitest'
import { parsePeriod } from '../../src/engine/index.js'
import { endsBefore, extendWithZeros } from '../../src/history/close-period.js'

const history = { frequency: 'month' as const, firstPeriod: '2025-10', demand: [3, null, 5], tags: ['category:heating'] }
const march = parsePeriod('2026-03', 'month')

describe('closing a period: carrying histories forward', () => {
  // 2025-10 .. 2025-12 carried to 2026-03: three zero months (January, February, March) appended.
  it('appends one zero per period up to the closed one, keeping values, gaps and tags', () => {
    expect(endsBefore(history, 'month', march)).toBe(true)
    expect(extendWithZeros(history, 'month', march)).toEqual({ data: { ...history, demand: [3, null, 5, 0, 0, 0] } })
  })

  it('leaves alone a history that already reaches the period, one of another frequency, or one deleted meanwhile', () => {
    const december = parsePeriod('2025-12', 'month')
    expect(endsBefore(history, 'month', december)).toBe(false)
    expect(extendWithZeros(history, 'month', december)).toEqual({ reason: 'the history already reaches 2025-12' })
    expect(endsBefore({ ...history, frequency: 'week', firstPeriod: '2025-W40' }, 'month', march)).toBe(false)
    expect(extendWithZeros({ ...history, frequency: 'week', firstPeriod: '2025-W40' }, 'month', march)).toEqual({ reason: 'the history is by week' })
    expect(extendWithZeros(null, 'month', march)).toEqual({ reason: 'the history was deleted meanwhile' })
  })

  it('never carries a history past the 10,000 periods a history may hold (docs/limits.md)', () => {
    const long = { ...history, firstPeriod: '1200-01', demand: Array.from({ length: 9_998 }, () => 1) }
    const last = parsePeriod('1200-01', 'month') + 9_997
    expect(extendWithZeros(long, 'month', last + 2)).toHaveProperty('data.demand.length', 10_000)
    expect(extendWithZeros(long, 'month', last + 3)).toEqual({ reason: 'the history would hold 10001 periods; at most 10000' })
  })
})
