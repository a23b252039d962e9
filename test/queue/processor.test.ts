import { describe, expect, it } from 'vitest'
import { forecastSeries } from '../../src/engine/index.js'
import { RunSettings } from '../../src/schemas/run.js'
import { syntheticSeries } from './fixtures.js'
import { forecastItem } from '../../src/runs/forecast-sku.js'

const settings = RunSettings.parse({ horizon: 4 })

describe('forecastItem', () => {
  it('keeps what the contract stores and drops fitted values', () => {
    const item = forecastItem(forecastSeries, settings, syntheticSeries(1)[0]!)
    expect(item.sku).toBe('SKU-00000')
    expect('failure' in item).toBe(false)
    if ('failure' in item) return
    expect(item.forecast).toHaveLength(4)
    expect(Object.keys(item)).toEqual(
      ['sku', 'frequency', 'model', 'family', 'params', 'modelChoice', 'holdoutErrors', 'candidates', 'forecast', 'intervalMethod', 'warnings'],
    )
  })

  it('turns input the engine rejects into a failed item with its code', () => {
    const item = forecastItem(forecastSeries, settings, { sku: 'GAP', demand: [null, null, null] })
    expect(item).toEqual({ sku: 'GAP', frequency: 'month', failure: { code: 'empty-series', message: expect.any(String) } })
  })

  it('lets any other error through so the chunk is retried', () => {
    const broken = () => {
      throw new TypeError('engine bug')
    }
    expect(() => forecastItem(broken, settings, { sku: 'X', demand: [1, 2, 3] })).toThrow(TypeError)
  })
})
