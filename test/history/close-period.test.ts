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
})
