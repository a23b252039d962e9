import { describe, expect, it } from 'vitest'
import { adjustPoints, finalDemandOf, sameAdjustment, type Adjustment } from '../../src/runs/adjustments.js'
import { valueAddedRecords } from '../../src/runs/adjustment-service.js'
import type { StoredAdjustment } from '../../src/storage/adjustments/adjustment-store.js'

const adj = (period: string, change: Adjustment['change'], author = 'dana'): Adjustment => ({
  period,
  change,
  reason: 'spring promotion',
  author,
  setAt: '2026-01-05T08:00:00.000Z',
  runId: 'run-1',
})
const stored = (a: Adjustment): StoredAdjustment => ({ adjustment: a, stored: JSON.stringify(a) })

describe('finalDemandOf', () => {
  it('no adjustment keeps the statistical demand', () => {
    expect(finalDemandOf(42, null)).toBe(42)
  })
  it('setDemand replaces it; changePercent scales it (hand-checked)', () => {
    expect(finalDemandOf(42, { setDemand: 0 })).toBe(0)
    expect(finalDemandOf(200, { changePercent: 15 })).toBeCloseTo(230, 12)
    expect(finalDemandOf(200, { changePercent: -100 })).toBe(0)
  })
})

describe('sameAdjustment', () => {
  it('compares change, reason and author, not the time', () => {
    const a = adj('2026-01', { changePercent: 10 })
    expect(sameAdjustment(a, { ...a, setAt: 'later' } as Adjustment)).toBe(true)
    expect(sameAdjustment(a, adj('2026-01', { setDemand: 10 }))).toBe(false)
    expect(sameAdjustment(a, adj('2026-01', { changePercent: 10 }, 'eli'))).toBe(false)
  })
})

describe('adjustPoints', () => {
  it('adds finalDemand and adjustment per point; demand stays statistical', () => {
    const points = [
      { period: '2026-01', demand: 100 },
      { period: '2026-02', demand: 80 },
    ]
    const out = adjustPoints(points, new Map([['2026-02', adj('2026-02', { setDemand: 95 })]]))
    expect(out).toEqual([
      { period: '2026-01', demand: 100, finalDemand: 100, adjustment: null },
      {
        period: '2026-02',
        demand: 80,
        finalDemand: 95,
        adjustment: { setDemand: 95, reason: 'spring promotion', author: 'dana', setAt: '2026-01-05T08:00:00.000Z' },
      },
    ])
  })
})

describe('valueAddedRecords', () => {
  // History 2025-10..2026-02 = 7, 9, 12, 20, 14; the forecast was made after 2025-12
  // (first point 2026-01), so the naive forecast is 12, the last value then known.
  const history = { sku: 'RAKE', frequency: 'month' as const, firstPeriod: '2025-10', demand: [7, 9, 12, 20, 14] }
  const forecast = {
    runId: 'run-7',
    points: new Map([
      ['2026-01', 15],
      ['2026-02', 16],
      ['2026-03', 17],
    ]),
  }

  it('scores the forecast periods the history has, against the naive value at the origin', () => {
    const out = valueAddedRecords(history, forecast, new Map([['2026-02', stored(adj('2026-02', { changePercent: -25 }))]]))
    expect(out).toEqual([
      { period: '2026-01', runId: 'run-7', statisticalDemand: 15, finalDemand: 15, naiveDemand: 12, actualDemand: 20, author: null },
      { period: '2026-02', runId: 'run-7', statisticalDemand: 16, finalDemand: 12, naiveDemand: 12, actualDemand: 14, author: 'dana' },
    ])
  })

  it('scores nothing when the naive value is missing or the actual is', () => {
    expect(valueAddedRecords({ ...history, demand: [7, 9, null, 20, 14] }, forecast, new Map())).toEqual([])
    const out = valueAddedRecords({ ...history, demand: [7, 9, 12, null, 14] }, forecast, new Map())
    expect(out.map((r) => r.period)).toEqual(['2026-02'])
  })
})
