import { constants, deflateRawSync } from 'node:zlib'
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { METRIC_NAMES, MODEL_REGISTRY, forecastSeries } from '../../src/engine/index.js'
import { toResultItem } from '../../src/storage/codec.js'
import { decodeItem, encodeItem, loadItem, round, roundedJson, servedBody, servedItemJson, storeItem } from '../../src/storage/item-codec.js'
import { ITEM_DEFLATE_LEVEL, deflateItem, inflateItem } from '../../src/storage/item-deflate.js'
import { ITEM_DICTIONARY } from '../../src/storage/item-dictionary.js'
import { STRUCTURE_DICTIONARY } from '../../src/storage/item-structure-dictionary.js'
import type { ResultItem } from '../../src/storage/types.js'
import { syntheticSeries } from '../queue/fixtures.js'

/**
 * Formats 0x02 and 0x03 keep the served JSON of an item, so a results page is the stored
 * text with the sku in front. The reference is the earlier path: the compact
 * form (encodeItem) decoded (decodeItem) and serialised with JSON.stringify. The
 * two must agree byte for byte, for engine results and for generated items with
 * awkward values (NaN, Infinity, -0, nulls, unknown models, escaped strings).
 */
const reference = (sku: string, item: ResultItem) => JSON.stringify(decodeItem(sku, encodeItem(item)))

const text = fc.string({ unit: 'grapheme', maxLength: 12 })
const num = fc.double()
const nullableNum = fc.option(num, { nil: null })
const metricSet = fc.record(Object.fromEntries(METRIC_NAMES.map((m) => [m, nullableNum])) as Record<(typeof METRIC_NAMES)[number], typeof nullableNum>)
const modelName = fc.constantFrom(...MODEL_REGISTRY.map((m) => m.name), 'future-model')
const family = fc.constantFrom('level', 'trend', 'seasonal', 'seasonal-trend', 'intermittent', 'unknown')
const levels = fc.uniqueArray(fc.constantFrom('80', '95', '50', '97.5', '99.9'), { maxLength: 3 })

const entry = fc
  .record(
    {
      model: modelName,
      family,
      status: fc.constantFrom('scored', 'skipped', 'failed'),
      metrics: metricSet,
      score: num,
      reason: text,
      scoreIsMetric: fc.boolean(),
      ownFamily: fc.boolean(),
    },
    { requiredKeys: ['model', 'family', 'status', 'scoreIsMetric', 'ownFamily'] },
  )
  .map(({ scoreIsMetric, ownFamily, ...e }) => {
    const own = MODEL_REGISTRY.find((m) => m.name === e.model)
    const out: Record<string, unknown> = { ...e, family: ownFamily && own ? own.family : e.family }
    if (scoreIsMetric && e.metrics && out.score !== undefined) out.score = e.metrics.mase ?? e.score
    return out
  })

const forecastItem = fc
  .record({
    sku: text,
    model: modelName,
    family,
    params: fc.dictionary(fc.constantFrom('alpha', 'beta', 'gamma', 'phi', 'level', 'seasonalFactors', 'window'), fc.oneof(num, fc.array(num, { maxLength: 4 }))),
    selection: fc.record({ method: fc.constantFrom('holdout', 'in-sample', 'none'), metric: fc.constantFrom(...METRIC_NAMES), holdout: fc.nat(), origins: fc.nat() }),
    metrics: fc.option(metricSet, { nil: null }),
    leaderboard: fc.array(entry, { maxLength: 4 }),
    levels,
    points: fc.array(fc.record({ period: text, value: num, bounds: fc.array(num, { minLength: 10, maxLength: 10 }) }), { maxLength: 5 }),
    intervals: fc.record({ method: fc.constantFrom('analytical', 'empirical', 'none'), levels: fc.array(num, { maxLength: 3 }), clamped: fc.boolean() }),
    warnings: fc.array(fc.record({ code: text, message: text }), { maxLength: 2 }),
    replenishment: fc.option(
      fc.record({
        leadTime: fc.nat(),
        serviceLevel: num,
        leadTimeDemand: num,
        sigma: nullableNum,
        z: num,
        safetyStock: nullableNum,
        reorderPoint: nullableNum,
        formula: fc.constant('sigma1-sqrt-lead-time'),
      }),
      { nil: undefined },
    ),
  })
  .map(({ levels: ls, points, replenishment, ...rest }) => {
    const bound = (values: number[], offset: number) => Object.fromEntries(ls.map((l, i) => [l, values[offset + i]!]))
    const forecast = points.map((p) => ({ period: p.period, value: p.value, lower: bound(p.bounds, 0), upper: bound(p.bounds, 5) }))
    return { ...rest, forecast, ...(replenishment ? { replenishment } : {}) } as unknown as ResultItem
  })

const errorItem = fc.record({ sku: text, error: fc.record({ code: text, message: text }) }) as fc.Arbitrary<ResultItem>

function forecastItemOf(item: ResultItem): Exclude<ResultItem, { error: unknown }> {
  if ('error' in item) throw new Error('expected a forecast')
  return item
}

const engineItems = (): ResultItem[] =>
  syntheticSeries(10, 48).map((s, i) =>
    toResultItem(s.sku, forecastSeries({ values: s.values, frequency: 'month', horizon: 12, origins: 1 + (i % 3), start: '2022-01' })),
  )

describe('served JSON of stored items (formats 0x03 and 0x02)', () => {
  it('equals the compact form decoded and serialised, byte for byte, for engine results', () => {
    for (const item of engineItems()) {
      expect(servedItemJson(item.sku, storeItem(item)).toString('utf8')).toBe(reference(item.sku, item))
      expect(JSON.stringify(loadItem(item.sku, storeItem(item)))).toBe(reference(item.sku, item))
    }
  })

  it('write rounded numbers as JSON.stringify writes the rounded double', () => {
    // Any double, and doubles spread evenly over the magnitudes where the fast path applies.
    const spread = fc.tuple(fc.double({ min: 1, max: 10, noNaN: true }), fc.integer({ min: -30, max: 30 }), fc.boolean())
      .map(([m, e, neg]) => (neg ? -1 : 1) * m * 10 ** e)
    fc.assert(
      fc.property(fc.oneof(fc.double(), spread, fc.integer()), fc.constantFrom(4, 7), (x, digits) => {
        expect(roundedJson(x, digits)).toBe(JSON.stringify(round(x, digits)))
      }),
      { numRuns: 20_000 },
    )
  })

  it('write numbers in stored items as the earlier path did, for doubles of every magnitude', () => {
    const spread = fc.tuple(fc.double({ min: 1, max: 10, noNaN: true }), fc.integer({ min: -30, max: 30 }), fc.boolean())
      .map(([m, e, neg]) => (neg ? -1 : 1) * m * 10 ** e)
    const base = forecastItemOf(engineItems()[0]!)
    fc.assert(
      fc.property(fc.array(fc.oneof(fc.double(), spread, fc.integer()), { minLength: 1, maxLength: 40 }), (xs) => {
        const item = { ...base, params: { xs }, metrics: { ...base.metrics!, mae: xs[0]!, rmse: xs[xs.length - 1]! } } as ResultItem
        expect(servedBody(item)).toBe(reference('', item).replace('{"sku":"",', '{'))
      }),
      { numRuns: 3_000 },
    )
  })

  it('equals it for generated items with awkward values', () => {
    fc.assert(
      fc.property(fc.oneof(forecastItem, errorItem), text, (item, sku) => {
        const stored = storeItem(item)
        expect(stored[0]).toBe(0x03)
        expect(servedItemJson(sku, stored).toString('utf8')).toBe(reference(sku, item))
        expect(JSON.stringify(loadItem(sku, stored))).toBe(reference(sku, item))
        expect(`{"sku":${JSON.stringify(sku)},${servedBody(item).slice(1)}`).toBe(reference(sku, item))
      }),
      { numRuns: 3000 },
    )
  })

  it('serves items of the earlier formats (0x02 with the 12 KB dictionary, 0x01 deflated, plain compact JSON) as before', () => {
    fc.assert(
      fc.property(fc.oneof(forecastItem, errorItem), text, (item, sku) => {
        const plain = Buffer.from(encodeItem(item), 'utf8')
        const deflated = Buffer.concat([Buffer.of(0x01), deflateRawSync(plain)])
        // As format 0x02 was written: the served JSON, raw DEFLATE with ITEM_DICTIONARY.
        const served = Buffer.concat([Buffer.of(0x02), deflateRawSync(Buffer.from(servedBody(item)), { dictionary: ITEM_DICTIONARY })])
        expect(servedItemJson(sku, served).toString('utf8')).toBe(reference(sku, item))
        expect(JSON.stringify(loadItem(sku, served))).toBe(reference(sku, item))
        expect(servedItemJson(sku, plain).toString('utf8')).toBe(reference(sku, item))
        expect(servedItemJson(sku, deflated).toString('utf8')).toBe(reference(sku, item))
      }),
      { numRuns: 100 },
    )
  })

  it.each(['structure', 'served'] as const)('deflate and inflate on the kept zlib state (%s dictionary) give back the input, also after a corrupt item', (dictionary) => {
    const inputs = engineItems().map((item) => Buffer.from(servedBody(item), 'utf8'))
    const packed = inputs.map((input) => deflateItem(input, dictionary))
    packed.forEach((p, i) => expect(inflateItem(p, dictionary).equals(inputs[i]!)).toBe(true))
    // The same DEFLATE stream zlib's one-shot call writes with the same settings.
    const settings = { dictionary: dictionary === 'structure' ? STRUCTURE_DICTIONARY : ITEM_DICTIONARY, level: ITEM_DEFLATE_LEVEL, strategy: constants.Z_FILTERED }
    packed.forEach((p, i) => expect(p.equals(deflateRawSync(inputs[i]!, settings))).toBe(true))
    // Not a deflate stream: zlib's own error, and the next item still inflates.
    expect(() => inflateItem(Buffer.from([0xff, 0xff, 0xff, 0xff]), dictionary)).toThrow()
    expect(inflateItem(packed[0]!, dictionary).equals(inputs[0]!)).toBe(true)
    // Larger than the kept buffers: the one-shot path.
    const big = Buffer.from('x'.repeat(300_000) + JSON.stringify(inputs.map(String)))
    expect(inflateItem(deflateItem(big, dictionary), dictionary).equals(big)).toBe(true)
  })

  it('need the dictionary an item was written with', () => {
    const input = Buffer.from(servedBody(engineItems()[0]!), 'utf8')
    let other: Buffer | undefined
    try {
      other = inflateItem(deflateItem(input, 'structure'), 'served')
    } catch {
      other = undefined // zlib may also refuse a distance into the wrong dictionary
    }
    expect(other?.equals(input) ?? false).toBe(false)
  })
})
