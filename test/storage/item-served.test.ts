import { inflateRawSync } from 'node:zlib'
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { METRIC_NAMES, MODEL_REGISTRY, forecastSeries, type MetricSet } from '../../src/engine/index.js'
import { toResultItem } from '../../src/storage/codec.js'
import { EXACT, REPLENISHMENT_FIELDS } from '../../src/storage/item-common.js'
import { loadItem, round, roundedJson, servedBody, servedItemJson, storeItem } from '../../src/storage/item-codec.js'
import type { ResultItem } from '../../src/storage/types.js'
import { syntheticSeries } from '../queue/fixtures.js'

/**
 * The specification of the served-JSON writer (item-served.ts): JSON.stringify
 * of the item, sku first, with forecasts, bounds, parameters and replenishment
 * figures rounded to 7 significant digits, error measures and scores to 4, and
 * a score that does not round to a finite number left out. The writer must give
 * the same bytes for engine results and for generated items with awkward values
 * (NaN, Infinity, -0, nulls, unknown model names, escaped strings).
 */
function reference(sku: string, item: ResultItem): string {
  if ('error' in item) return JSON.stringify({ sku, error: { code: item.error.code, message: item.error.message } })
  const r7 = (x: number) => round(x, 7)
  const r4 = (x: number) => round(x, 4)
  const errors = (m: MetricSet) => Object.fromEntries(METRIC_NAMES.map((k) => [k, m[k] === null ? null : r4(m[k])]))
  const levels = (side: 'lower' | 'upper') => Object.keys(item.forecast[0]?.[side] ?? {})
  const bounds = (b: Readonly<Record<string, number>>, keys: string[]) => Object.fromEntries(keys.map((l) => [l, r7(b[l]!)]))
  const r = item.replenishment
  return JSON.stringify({
    sku,
    model: item.model,
    family: item.family,
    params: Object.fromEntries(Object.entries(item.params).map(([k, v]) => [k, typeof v === 'number' ? r7(v) : v.map(r7)])),
    selection: { method: item.selection.method, metric: item.selection.metric, holdout: item.selection.holdout, origins: item.selection.origins },
    metrics: item.metrics === null ? null : errors(item.metrics),
    leaderboard: item.leaderboard.map((e) => ({
      model: e.model,
      family: e.family,
      status: e.status,
      ...(e.metrics ? { metrics: errors(e.metrics) } : {}),
      ...(e.score !== undefined && Number.isFinite(r4(e.score)) ? { score: r4(e.score) } : {}),
      ...(e.reason != null ? { reason: e.reason } : {}),
    })),
    forecast: item.forecast.map((p) => ({ period: p.period, value: r7(p.value), lower: bounds(p.lower, levels('lower')), upper: bounds(p.upper, levels('upper')) })),
    intervals: { method: item.intervals.method, levels: item.intervals.levels, clamped: item.intervals.clamped },
    warnings: item.warnings.map((w) => ({ code: w.code, message: w.message })),
    ...(r ? { replenishment: { ...Object.fromEntries(REPLENISHMENT_FIELDS.map((k) => [k, r[k] === null || EXACT.has(k) ? r[k] : r7(r[k])])), formula: r.formula } } : {}),
  })
}

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

describe('served JSON of stored items', () => {
  it('equals the reference, byte for byte, for engine results', () => {
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

  it('equals the reference for doubles of every magnitude', () => {
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
        expect(servedItemJson(sku, stored).toString('utf8')).toBe(reference(sku, item))
        expect(JSON.stringify(loadItem(sku, stored))).toBe(reference(sku, item))
        expect(`{"sku":${JSON.stringify(sku)},${servedBody(item).slice(1)}`).toBe(reference(sku, item))
      }),
      { numRuns: 3000 },
    )
  })

  it('are deflated with the structure dictionary and need it to be read', () => {
    const item = engineItems()[0]!
    const stored = storeItem(item)
    // The dictionary holds the structure, so an item takes well under half its served JSON.
    expect(stored.length).toBeLessThan(Buffer.byteLength(servedBody(item)) / 2)
    let other: string | undefined
    try {
      other = inflateRawSync(stored).toString('utf8')
    } catch {
      other = undefined // zlib refuses a distance into the missing dictionary
    }
    expect(other).not.toBe(servedBody(item))
  })
})
