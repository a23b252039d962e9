import { describe, expect, it } from 'vitest'
import { forecastSeries } from '../../../src/engine/index.js'
import { loadItem } from '../../../src/storage/items/item-codec.js'
import { decodePoints } from '../../../src/storage/items/latest-record.js'
import { prepareItem } from '../../../src/storage/items/prepared-item.js'
import { syntheticSeries } from '../../queue/fixtures.js'
import { toResultItem } from '../../../src/runs/forecast-sku.js'

describe('prepareItem', () => {
  it('keeps the stored bytes and the latest-forecast points of a forecast', () => {
    const [s] = syntheticSeries(1)
    const result = forecastSeries({ demand: s!.demand, frequency: 'month', firstPeriod: '2025-01', horizon: 4 })
    const item = toResultItem(s!.sku, 'month', result)
    const prepared = prepareItem(item)
    expect(prepared.sku).toBe(s!.sku)
    // The stored bytes read back as the item (values kept to 7 significant digits).
    const loaded = loadItem(s!.sku, prepared.stored)
    expect(loaded).toMatchObject({ sku: s!.sku, model: result.model })
    if ('failure' in loaded || 'failure' in item) throw new Error('expected a forecast')
    expect(loaded.forecast.map((p) => p.period)).toEqual(item.forecast.map((p) => p.period))
    const points = decodePoints(prepared.points!)
    expect([...points.keys()]).toEqual(item.forecast.map((p) => p.period))
    for (const p of item.forecast) expect(points.get(p.period)).toBeCloseTo(p.demand, 4)
  })

  it('gives an error item no points, so it never becomes a latest forecast', () => {
    const prepared = prepareItem({ sku: 'X', frequency: 'month', failure: { code: 'empty-series', message: 'no data' } })
    expect(prepared.points).toBeNull()
    expect(loadItem('X', prepared.stored)).toEqual({ sku: 'X', frequency: 'month', failure: { code: 'empty-series', message: 'no data' } })
  })
})
