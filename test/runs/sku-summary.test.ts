import { describe, expect, it } from 'vitest'
import type { ResultItem } from '../../src/runs/contract.js'
import { summariseItem } from '../../src/runs/sku-summary.js'

const errors = { mae: 2, rmse: 2.5, mape: 12.5, smape: 11.9, mase: 0.8, wape: 0.1 }

/** A forecast item of the invented distributor (hand-made: the summary only picks fields). */
const forecastItem = (over: Partial<Extract<ResultItem, { model: string }>> = {}): ResultItem => ({
  sku: 'GRD-1001',
  frequency: 'month',
  model: 'trend-smoothing',
  family: 'trend',
  params: {},
  modelChoice: { method: 'holdout', rankBy: 'mase', holdoutPeriods: 6, holdoutOrigins: 1 },
  holdoutErrors: errors,
  candidates: [],
  forecast: [{ period: '2027-01', demand: 12, intervals: [] }],
  intervalMethod: 'none',
  warnings: [],
  ...over,
})

describe('summariseItem', () => {
  it('a failed item has no model and no error', () => {
    const item: ResultItem = { sku: 'HTG-2001', frequency: 'month', failure: { code: 'empty-series', message: 'no demand' } }
    expect(summariseItem(item)).toEqual({ model: null, warnings: [], failed: true, error: null })
  })

  it('takes the holdout error named by the run\'s rankBy, not MASE when the run ranked by another', () => {
    expect(summariseItem(forecastItem()).error).toEqual({ measure: 'mase', value: 0.8 })
    const byMape = forecastItem({ modelChoice: { method: 'holdout', rankBy: 'mape', holdoutPeriods: 6, holdoutOrigins: 1 } })
    expect(summariseItem(byMape)).toEqual({ model: 'trend-smoothing', warnings: [], failed: false, error: { measure: 'mape', value: 12.5 } })
  })

  it('has no error when the model was not chosen on a holdout, or the error is not finite', () => {
    const inSample = forecastItem({ modelChoice: { method: 'in-sample', rankBy: 'mase', holdoutPeriods: 0, holdoutOrigins: 0 } })
    expect(summariseItem(inSample).error).toBeNull()
    expect(summariseItem(forecastItem({ holdoutErrors: null })).error).toBeNull()
    // MAPE is undefined when an actual is 0: the engine reports a non-finite value.
    const undefinedMape = forecastItem({
      modelChoice: { method: 'holdout', rankBy: 'mape', holdoutPeriods: 6, holdoutOrigins: 1 },
      holdoutErrors: { ...errors, mape: Number.POSITIVE_INFINITY },
    })
    expect(summariseItem(undefinedMape).error).toBeNull()
  })

  it('lists each warning code once, sorted, and leaves out codes that are not kebab-case words', () => {
    const item = forecastItem({
      warnings: [
        { code: 'short-history', message: 'a' },
        { code: 'no-intervals', message: 'b' },
        { code: 'short-history', message: 'c' },
        { code: 'Bad|Code', message: 'd' },
      ],
    })
    expect(summariseItem(item).warnings).toEqual(['no-intervals', 'short-history'])
  })
})
