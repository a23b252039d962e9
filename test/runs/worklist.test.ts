import { describe, expect, it } from 'vitest'
import { decideWorklist, forecastChange, itemSignals, pickComparison, type WorklistSignals } from '../../src/runs/worklist.js'
import type { ResultItem } from '../../src/runs/contract.js'

const points = (values: Record<string, number>) => new Map(Object.entries(values))
const ok = (sku: string): WorklistSignals => ({ sku, failure: null, shortHistory: null })

// The large-change rule is our own (relative change of the summed common periods, 25 % by
// default: our default, not a standard of the trade), so these cases are worked by hand.
describe('forecastChange', () => {
  it('no common period: no comparison', () => {
    expect(forecastChange(points({ '2026-01': 10 }), points({ '2026-02': 10 }))).toBeNull()
  })

  it('compares the sums of the common periods only', () => {
    // Common: 2026-02, 2026-03. Before 10 + 10 = 20, after 12 + 13 = 25: +25 %, exactly the threshold.
    const c = forecastChange(points({ '2026-01': 99, '2026-02': 10, '2026-03': 10 }), points({ '2026-02': 12, '2026-03': 13, '2026-04': 500 }))
    expect(c).toEqual({ ratio: 0.25, commonPeriods: 2, large: true })
  })

  it('a fall counts as much as a rise; below the threshold is not large', () => {
    expect(forecastChange(points({ a: 100 }), points({ a: 70 }))).toEqual({ ratio: -0.3, commonPeriods: 1, large: true })
    expect(forecastChange(points({ a: 100 }), points({ a: 80 }))?.large).toBe(false)
    expect(forecastChange(points({ a: 100 }), points({ a: 80 }), 20)?.large).toBe(true)
  })

  it('demand moved between periods with the same total is no change', () => {
    expect(forecastChange(points({ a: 10, b: 30 }), points({ a: 30, b: 10 }))).toEqual({ ratio: 0, commonPeriods: 2, large: false })
  })

  it('from a zero sum: no ratio, large when the new sum is not zero', () => {
    expect(forecastChange(points({ a: 0 }), points({ a: 0 }))).toEqual({ ratio: null, commonPeriods: 1, large: false })
    expect(forecastChange(points({ a: 0 }), points({ a: 2 }))).toEqual({ ratio: null, commonPeriods: 1, large: true })
  })
})

describe('decideWorklist', () => {
  it('a steady forecast with a long history is on no list', () => {
    const e = decideWorklist(ok('RAKE'), { points: points({ a: 10 }) }, { runId: 'r1', points: points({ a: 11 }) })
    expect(e.kinds).toEqual([])
    expect(e.changeRatio).toBeCloseTo(-1 / 11, 12)
    expect(e.previousRunId).toBe('r1')
  })

  it('the first published forecast has nothing to change from', () => {
    expect(decideWorklist(ok('RAKE'), { points: points({ a: 10 }) }, null)).toEqual({
      sku: 'RAKE', kinds: [], changeRatio: null, previousRunId: null, commonPeriods: 0, failure: null, historyLength: null,
    })
  })

  it('a large change, and a short history', () => {
    const e = decideWorklist({ sku: 'GLOVE', failure: null, shortHistory: 6 }, { points: points({ a: 20 }) }, { runId: 'r1', points: points({ a: 10 }) })
    expect(e.kinds).toEqual(['large-change', 'short-history'])
    expect(e.changeRatio).toBe(1)
    expect(e.historyLength).toBe(6)
  })

  it('a failed item is failed only', () => {
    const failure = { code: 'no-data', message: 'every value is missing' }
    expect(decideWorklist({ sku: 'X', failure, shortHistory: null }, null, null)).toMatchObject({ kinds: ['failed'], failure, historyLength: null })
  })
})

describe('itemSignals', () => {
  it('takes the failure, or the short-history warning with the history length', () => {
    const failed: ResultItem = { sku: 'A', frequency: 'month', failure: { code: 'no-data', message: 'm'.repeat(400) } }
    expect(itemSignals(failed, 3).failure).toEqual({ code: 'no-data', message: 'm'.repeat(300) })
    const item = { sku: 'B', frequency: 'month', warnings: [{ code: 'short-history', message: '...' }] } as unknown as ResultItem
    expect(itemSignals(item, 7)).toEqual({ sku: 'B', failure: null, shortHistory: 7 })
    const long = { sku: 'C', frequency: 'month', warnings: [{ code: 'holdout-reduced', message: '...' }] } as unknown as ResultItem
    expect(itemSignals(long, 40).shortHistory).toBeNull()
  })
})

describe('pickComparison', () => {
  const list = [{ runId: 'r3' }, { runId: 'r2' }, { runId: 'r1' }]
  it('finds the run and the one published before it', () => {
    expect(pickComparison(list, 'r2')).toEqual({ current: { runId: 'r2' }, previous: { runId: 'r1' } })
    expect(pickComparison(list, 'r1')).toEqual({ current: { runId: 'r1' }, previous: null })
    expect(pickComparison(list, 'r9')).toEqual({ current: null, previous: null })
  })
})
