import { describe, expect, it } from 'vitest'
import { forecastSeries } from '../../src/engine/index.js'
import { toResultItem } from '../../src/storage/codec.js'
import { loadItem, servedBody } from '../../src/storage/item-codec.js'
import { decodePoints } from '../../src/storage/latest-record.js'
import { ItemPreparer, prepareItem } from '../../src/storage/prepared-item.js'
import type { ResultItem } from '../../src/storage/types.js'
import { syntheticSeries } from '../queue/fixtures.js'

describe('prepareItem', () => {
  it('keeps the stored bytes and the latest-forecast points of a forecast', () => {
    const [s] = syntheticSeries(1)
    const result = forecastSeries({ values: s!.values, frequency: 'month', start: '2025-01', horizon: 4 })
    const item = toResultItem(s!.sku, result)
    const prepared = prepareItem(item)
    expect(prepared.sku).toBe(s!.sku)
    // The stored bytes read back as the item (values kept to 7 significant digits).
    const loaded = loadItem(s!.sku, prepared.stored)
    expect(loaded).toMatchObject({ sku: s!.sku, model: result.model })
    if ('error' in loaded || 'error' in item) throw new Error('expected a forecast')
    expect(loaded.forecast.map((p) => p.period)).toEqual(item.forecast.map((p) => p.period))
    const points = decodePoints(prepared.points!)
    expect([...points.keys()]).toEqual(item.forecast.map((p) => p.period))
    for (const p of item.forecast) expect(points.get(p.period)).toBeCloseTo(p.value, 4)
  })

  it('gives an error item no points, so it never becomes a latest forecast', () => {
    const prepared = prepareItem({ sku: 'X', error: { code: 'empty-series', message: 'no data' } })
    expect(prepared.points).toBeNull()
    expect(loadItem('X', prepared.stored)).toEqual({ sku: 'X', error: { code: 'empty-series', message: 'no data' } })
  })
})

describe('ItemPreparer', () => {
  it('gives the same bytes and points as prepareItem, in the order added, across batches and oversized items', () => {
    const items: ResultItem[] = syntheticSeries(90).map((s) =>
      toResultItem(s.sku, forecastSeries({ values: s.values, frequency: 'month', start: '2025-01', horizon: 6 })),
    )
    items.splice(10, 0, { sku: 'ERR-1', error: { code: 'empty-series', message: 'no data' } })
    // Larger than the 128 KB batch arena on its own: prepared alone, in its place.
    items.splice(40, 0, { sku: 'BIG', error: { code: 'invalid-option', message: 'x'.repeat(200_000) } })
    const preparer = new ItemPreparer()
    for (const item of items) preparer.add(item)
    const prepared = preparer.finish()
    expect(prepared.map((p) => p.sku)).toEqual(items.map((i) => i.sku))
    items.forEach((item, k) => {
      const one = prepareItem(item)
      expect(prepared[k]!.stored.equals(one.stored)).toBe(true)
      expect(prepared[k]!.points).toBe(one.points)
    })
    // More than one batch was written (about 30 items of ~4 KB fit in the arena).
    const served = items.filter((i) => i.sku !== 'BIG').reduce((n, i) => n + Buffer.byteLength(servedBody(i)), 0)
    expect(served).toBeGreaterThan(2 * 128 * 1024)
  })
})
