import { describe, expect, it } from 'vitest'
import { summariseValueAdded, valueAddedByAuthor, type ValueAddedRecord } from '../../src/runs/value-added.js'

const rec = (period: string, statistical: number, final: number, naive: number, actual: number, author: string | null = null): ValueAddedRecord => ({
  period,
  runId: 'run-1',
  statisticalDemand: statistical,
  finalDemand: final,
  naiveDemand: naive,
  actualDemand: actual,
  author,
})

// Forecast value added as the trade defines it: the error a process step removed
// relative to the step before it, here naive -> statistical -> final, scored by MAE
// (M. Gilliland, "The Business Forecasting Deal", Wiley 2010, ch. on FVA; definition
// from memory). The numbers below are worked by hand in the comments.
describe('summariseValueAdded', () => {
  it('nothing scored: every error and verdict is null', () => {
    expect(summariseValueAdded([])).toEqual({
      scoredPeriods: 0,
      adjustedPeriods: 0,
      mae: { statistical: null, final: null, naive: null },
      valueAdded: { adjustments: null, statistical: null, final: null },
      adjustmentsBeatStatistical: null,
      statisticalBeatsNaive: null,
      finalBeatsNaive: null,
    })
  })

  it('no adjustment: final equals statistical, adjustments give no verdict', () => {
    const s = summariseValueAdded([rec('2026-01', 10, 10, 12, 11)])
    expect(s.adjustedPeriods).toBe(0)
    expect(s.mae).toEqual({ statistical: 1, final: 1, naive: 1 })
    expect(s.valueAdded.adjustments).toBe(0)
    expect(s.adjustmentsBeatStatistical).toBeNull()
    // A tie is not a win.
    expect(s.statisticalBeatsNaive).toBe(false)
  })

  // Hand-computed example, four months:
  //   actual       100   80  120   90
  //   statistical  110  100  100  100   |err| 10 20 20 10 -> MAE 15
  //   final        110   85  125  100   |err| 10  5  5 10 -> MAE 7.5   (85 by ana, 125 by ben)
  //   naive         95   95   95   95   |err|  5 15 25  5 -> MAE 12.5
  //   value added: adjustments 15 - 7.5 = 7.5; statistical 12.5 - 15 = -2.5; final 12.5 - 7.5 = 5
  const records = [
    rec('2026-01', 110, 110, 95, 100),
    rec('2026-02', 100, 85, 95, 80, 'ana'),
    rec('2026-03', 100, 125, 95, 120, 'ben'),
    rec('2026-04', 100, 100, 95, 90),
  ]

  it('matches the hand-computed example', () => {
    expect(summariseValueAdded(records)).toEqual({
      scoredPeriods: 4,
      adjustedPeriods: 2,
      mae: { statistical: 15, final: 7.5, naive: 12.5 },
      valueAdded: { adjustments: 7.5, statistical: -2.5, final: 5 },
      adjustmentsBeatStatistical: true,
      statisticalBeatsNaive: false,
      finalBeatsNaive: true,
    })
  })

  it('per author: only the periods each adjusted', () => {
    // ana, 2026-02: statistical |80-100| = 20, final |80-85| = 5, naive |80-95| = 15.
    // ben, 2026-03: statistical |120-100| = 20, final |120-125| = 5, naive |120-95| = 25.
    const by = valueAddedByAuthor(records)
    expect(by.map((b) => [b.author, b.mae, b.adjustmentsBeatStatistical, b.statisticalBeatsNaive, b.finalBeatsNaive])).toEqual([
      ['ana', { statistical: 20, final: 5, naive: 15 }, true, false, true],
      ['ben', { statistical: 20, final: 5, naive: 25 }, true, true, true],
    ])
  })

  it('an adjustment that made things worse is reported as such', () => {
    // actual 50, statistical 52 (|2|), final 70 (|20|), naive 40 (|10|).
    const s = summariseValueAdded([rec('2026-05', 52, 70, 40, 50, 'ana')])
    expect(s.valueAdded).toEqual({ adjustments: -18, statistical: 8, final: -10 })
    expect([s.adjustmentsBeatStatistical, s.statisticalBeatsNaive, s.finalBeatsNaive]).toEqual([false, true, false])
  })
})
