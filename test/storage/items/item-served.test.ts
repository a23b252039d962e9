import { inflateRawSync } from 'node:zlib'
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { FREQUENCIES, METRIC_NAMES, MODEL_REGISTRY, forecastSeries, type MetricSet } from '../../../src/engine/index.js'
import { EXACT, REPLENISHMENT_FIELDS, REPLENISHMENT_PERIOD_FIELDS } from '../../../src/storage/items/item-common.js'
import { loadItem, round, roundedJson, servedBody, servedItemJson, servedItemParts, storeItem, withoutCandidates } from '../../../src/storage/items/item-codec.js'
import type { ForecastItem, ResultItem } from '../../../src/runs/contract.js'
import { syntheticSeries } from '../../queue/fixtures.js'
import { toResultItem } from '../../../src/runs/forecast-sku.js'

/**
 * The specification of the served-JSON writer (item-served.ts): JSON.stringify
 * of the item, sku first, with demand, interval bounds, parameters and
 * replenishment figures rounded to 7 significant digits, holdout errors and
 * scores to 4, and a score that does not round to a finite number left out. The
 * writer must give the same bytes for engine results and for generated items with
 * awkward values (NaN, Infinity, -0, nulls, escaped strings).
 */
function reference(sku: string, item: ResultItem): string {
  if ('failure' in item) return JSON.stringify({ sku, frequency: item.frequency, failure: { code: item.failure.code, message: item.failure.message } })
  const r7 = (x: number) => round(x, 7)
  const r4 = (x: number) => round(x, 4)
  const fig = (k: string, v: number | null) => (v === null || EXACT.has(k) ? v : r7(v))
  const errors = (m: MetricSet) => ({
    ...Object.fromEntries(METRIC_NAMES.map((k) => [k, m[k] === null ? null : r4(m[k])])),
    ...(m.msis !== undefined ? { msis: m.msis === null ? null : r4(m.msis) } : {}),
    ...(m.pinball !== undefined ? { pinball: m.pinball === null ? null : r4(m.pinball) } : {}),
  })
  const c = item.modelChoice
  const r = item.replenishment
  return JSON.stringify({
    sku,
    frequency: item.frequency,
    model: item.model,
    family: item.family,
    params: Object.fromEntries(Object.entries(item.params).map(([k, v]) => [k, typeof v === 'number' ? r7(v) : v.map(r7)])),
    modelChoice: {
      method: c.method,
      rankBy: c.rankBy,
      holdoutPeriods: c.holdoutPeriods,
      holdoutOrigins: c.holdoutOrigins,
      ...(c.members ? { members: c.members.map((m) => ({ model: m.model, family: m.family })) } : {}),
    },
    holdoutErrors: item.holdoutErrors === null ? null : errors(item.holdoutErrors),
    candidates: item.candidates.map((e) => ({
      model: e.model,
      family: e.family,
      status: e.status,
      ...(e.holdoutErrors ? { holdoutErrors: errors(e.holdoutErrors) } : {}),
      ...(e.score !== undefined && Number.isFinite(r4(e.score)) ? { score: r4(e.score) } : {}),
      ...(e.reason != null ? { reason: e.reason } : {}),
    })),
    forecast: item.forecast.map((p) => ({
      period: p.period,
      demand: r7(p.demand),
      intervals: p.intervals.map((i) => ({ level: i.level, low: r7(i.low), high: r7(i.high) })),
      ...(p.quantiles ? { quantiles: p.quantiles.map((q) => ({ quantile: q.quantile, demand: r7(q.demand) })) } : {}),
    })),
    intervalMethod: item.intervalMethod,
    warnings: item.warnings.map((w) => ({ code: w.code, message: w.message })),
    ...(r
      ? {
          replenishment: {
            ...Object.fromEntries(REPLENISHMENT_FIELDS.map((k) => [k, fig(k, r[k])])),
            formula: r.formula,
            periods: r.periods.map((p) => ({ period: p.period, ...Object.fromEntries(REPLENISHMENT_PERIOD_FIELDS.map((k) => [k, fig(k, p[k])])) })),
          },
        }
      : {}),
  })
}

const text = fc.string({ unit: 'grapheme', maxLength: 12 })
const num = fc.double()
const nullableNum = fc.option(num, { nil: null })
const errorSet = fc.record(
  { ...(Object.fromEntries(METRIC_NAMES.map((m) => [m, nullableNum])) as Record<(typeof METRIC_NAMES)[number], typeof nullableNum>), msis: nullableNum, pinball: nullableNum },
  { requiredKeys: [...METRIC_NAMES] },
)
const modelName = fc.constantFrom(...MODEL_REGISTRY.map((m) => m.name))
const family = fc.constantFrom('level', 'trend', 'seasonal', 'seasonal-trend', 'intermittent')
const frequency = fc.constantFrom(...FREQUENCIES)
const levels = fc.uniqueArray(fc.constantFrom(80, 95, 50, 97.5, 99.9), { maxLength: 3 })

const candidate = fc
  .record(
    {
      model: modelName,
      family,
      status: fc.constantFrom('scored', 'skipped', 'failed'),
      holdoutErrors: errorSet,
      score: num,
      reason: text,
      scoreIsError: fc.boolean(),
    },
    { requiredKeys: ['model', 'family', 'status', 'scoreIsError'] },
  )
  .map(({ scoreIsError, ...e }) => {
    const out: Record<string, unknown> = { ...e }
    if (scoreIsError && e.holdoutErrors && out.score !== undefined) out.score = e.holdoutErrors.mase ?? e.score
    return out
  })

const forecastItem = fc
  .record({
    sku: text,
    frequency,
    model: modelName,
    family,
    params: fc.dictionary(
      fc.constantFrom('levelWeight', 'trendWeight', 'seasonWeight', 'damping', 'level', 'seasonFactors', 'window'),
      fc.oneof(num, fc.array(num, { maxLength: 4 })),
    ),
    modelChoice: fc.record(
      {
        method: fc.constantFrom('holdout', 'in-sample', 'none'),
        rankBy: fc.constantFrom(...METRIC_NAMES),
        holdoutPeriods: fc.nat(),
        holdoutOrigins: fc.nat(),
        members: fc.array(fc.record({ model: modelName, family }), { minLength: 2, maxLength: 3 }),
      },
      { requiredKeys: ['method', 'rankBy', 'holdoutPeriods', 'holdoutOrigins'] },
    ),
    holdoutErrors: fc.option(errorSet, { nil: null }),
    candidates: fc.array(candidate, { maxLength: 4 }),
    levels,
    points: fc.array(fc.record({ period: text, demand: num, bounds: fc.array(num, { minLength: 6, maxLength: 6 }) }), { maxLength: 5 }),
    intervalMethod: fc.constantFrom('analytical', 'empirical', 'calibrated', 'none'),
    warnings: fc.array(fc.record({ code: text, message: text }), { maxLength: 2 }),
    replenishment: fc.option(
      fc.record({
        leadTimePeriods: num,
        reviewPeriods: num,
        leadTimeSdPeriods: num,
        serviceLevel: num,
        minimumOrder: num,
        packSize: num,
        leadTimeDemand: num,
        coverDemand: num,
        sigma: nullableNum,
        z: num,
        safetyStock: nullableNum,
        reorderPoint: nullableNum,
        orderQuantity: num,
        formula: fc.constant('summed-step-variance'),
        periods: fc.array(
          fc.record({ period: text, coverDemand: num, sigma: nullableNum, safetyStock: nullableNum, reorderPoint: nullableNum }),
          { maxLength: 3 },
        ),
      }),
      { nil: undefined },
    ),
  })
  .map(({ levels: ls, points, replenishment, ...rest }) => {
    // Every point carries the run's levels, as the engine writes them.
    const forecast = points.map((p) => ({
      period: p.period,
      demand: p.demand,
      intervals: ls.map((level, i) => ({ level, low: p.bounds[2 * i]!, high: p.bounds[2 * i + 1]! })),
    }))
    return { ...rest, forecast, ...(replenishment ? { replenishment } : {}) } as unknown as ResultItem
  })

const failedItem = fc.record({ sku: text, frequency, failure: fc.record({ code: text, message: text }) }) as fc.Arbitrary<ResultItem>

function forecastItemOf(item: ResultItem): ForecastItem {
  if ('failure' in item) throw new Error('expected a forecast')
  return item
}

const engineItems = (): ResultItem[] =>
  syntheticSeries(10, 48).map((s, i) =>
    toResultItem(
      s.sku,
      'month',
      forecastSeries({ demand: s.demand, frequency: 'month', horizon: 12, holdoutOrigins: 1 + (i % 3), firstPeriod: '2022-01' }),
    ),
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
        const item = { ...base, params: { xs }, holdoutErrors: { ...base.holdoutErrors!, mae: xs[0]!, rmse: xs[xs.length - 1]! } } as ResultItem
        expect(servedBody(item)).toBe(reference('', item).replace('{"sku":"",', '{'))
      }),
      { numRuns: 3_000 },
    )
  })

  it('equals it for generated items with awkward values', () => {
    fc.assert(
      fc.property(fc.oneof(forecastItem, failedItem), text, (item, sku) => {
        const stored = storeItem(item)
        expect(servedItemJson(sku, stored).toString('utf8')).toBe(reference(sku, item))
        expect(JSON.stringify(loadItem(sku, stored))).toBe(reference(sku, item))
        expect(`{"sku":${JSON.stringify(sku)},${servedBody(item).slice(1)}`).toBe(reference(sku, item))
      }),
      { numRuns: 3000 },
    )
  })

  it('lose exactly their candidates in the compact view', () => {
    const compactReference = (sku: string, item: ResultItem) => {
      const { candidates: _c, ...rest } = JSON.parse(reference(sku, item)) as Record<string, unknown>
      return JSON.stringify(rest)
    }
    for (const item of engineItems()) {
      expect(Buffer.concat(servedItemParts(item.sku, storeItem(item), 'compact')).toString('utf8')).toBe(compactReference(item.sku, item))
    }
    fc.assert(
      fc.property(fc.oneof(forecastItem, failedItem), text, (item, sku) => {
        expect(Buffer.concat(servedItemParts(sku, storeItem(item), 'compact')).toString('utf8')).toBe(compactReference(sku, item))
      }),
      { numRuns: 2000 },
    )
    // A reason holding the text that ends the array in the served JSON is still inside the array.
    const base = forecastItemOf(engineItems()[0]!)
    const tricky = { ...base, candidates: [{ model: base.model, family: base.family, status: 'skipped', reason: '],"forecast":[{"x":"]' }] } as ResultItem
    expect(withoutCandidates(Buffer.from(servedBody(tricky))).toString('utf8')).toBe(compactReference('', tricky).replace('{"sku":"",', '{'))
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
