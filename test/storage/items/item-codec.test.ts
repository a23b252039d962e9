import { describe, expect, it } from 'vitest'
import { forecastSeries } from '../../../src/engine/index.js'
import { loadItem, servedBody, storeItem } from '../../../src/storage/items/item-codec.js'
import { ForecastItem } from '../../../src/schemas/results.js'
import type { ResultItem } from '../../../src/runs/contract.js'
import { syntheticSeries } from '../../queue/fixtures.js'
import { toResultItem } from '../../../src/runs/forecast-sku.js'

/** Same shape, equal strings and booleans, numbers within `relTol`. */
function expectClose(actual: unknown, expected: unknown, relTol: number, path = 'item'): void {
  if (typeof expected === 'number') {
    expect(typeof actual, path).toBe('number')
    const scale = Math.max(Math.abs(expected), 1e-12)
    expect(Math.abs((actual as number) - expected) / scale, path).toBeLessThanOrEqual(relTol)
    return
  }
  if (expected === null || typeof expected !== 'object') return void expect(actual, path).toEqual(expected)
  expect(Object.keys(actual as object).sort(), path).toEqual(Object.keys(expected).sort())
  for (const [k, v] of Object.entries(expected)) expectClose((actual as Record<string, unknown>)[k], v, relTol, `${path}.${k}`)
}

const engineItems = (): ResultItem[] =>
  syntheticSeries(6, 48).map((s, i) =>
    toResultItem(s.sku, 'month', forecastSeries({ demand: s.demand, frequency: 'month', horizon: 12, holdoutOrigins: 1 + (i % 3), firstPeriod: '2022-01' })),
  )

describe('stored result items', () => {
  it('restore engine results: forecasts and parameters to 7 digits, error measures to 4', () => {
    for (const item of engineItems()) {
      const back = loadItem(item.sku, storeItem(item))
      expectClose(back, item, 5e-4)
      if ('failure' in item || 'failure' in back) throw new Error('expected forecasts')
      expectClose(back.forecast, item.forecast, 5e-7)
      expectClose(back.params, item.params, 5e-7)
      expect(back.candidates.map((e) => [e.model, e.family, e.status])).toEqual(item.candidates.map((e) => [e.model, e.family, e.status]))
      expect(ForecastItem.safeParse(back).success).toBe(true)
    }
  })

  it('restore error items exactly', () => {
    const item: ResultItem = { sku: 'A', frequency: 'month', failure: { code: 'negative-value', message: 'demand[0] is negative' } }
    expect(loadItem('A', storeItem(item))).toEqual(item)
  })

  it('keep zero, null and missing fields as they were', () => {
    const item: ResultItem = {
      sku: 'Z',
      frequency: 'month',
      model: 'last-value',
      family: 'level',
      params: {},
      modelChoice: { method: 'none', rankBy: 'mase', holdoutPeriods: 0, holdoutOrigins: 1 },
      holdoutErrors: null,
      candidates: [
        { model: 'last-value', family: 'level', status: 'scored', holdoutErrors: { mae: 0, rmse: 0, mape: null, smape: 0, mase: 0, wape: 0 }, score: 0 },
        { model: 'trend-smoothing', family: 'trend', status: 'skipped', reason: 'needs 4 periods, has 3' },
      ],
      forecast: [{ period: '2024-01', demand: 0, intervals: [] }],
      intervalMethod: 'none',
      warnings: [{ code: 'all-zero-series', message: 'the history is all zero' }],
    }
    expect(loadItem('Z', storeItem(item))).toEqual(item)
  })

  it('take well under a third of the bytes of their served JSON', () => {
    for (const item of engineItems()) expect(storeItem(item).length).toBeLessThan(Buffer.byteLength(servedBody(item)) / 3)
  })

  it('keep the sku out of the stored bytes (it is the hash field)', () => {
    for (const item of engineItems()) expect(storeItem(item).includes(item.sku)).toBe(false)
  })
})
