import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { RunSubmission, SeriesItem } from '../../src/schemas/run.js'
import { isSeriesItem, parseRunSubmissionFast } from '../../src/schemas/series-check.js'

/**
 * The plain check must never vouch for something the schema would refuse or
 * change: whenever it says yes, zod accepts the same value and returns an equal
 * one. Generated near-misses probe every rule (lengths, control characters,
 * lone surrogates, value range, period labels, frequencies, season lengths, unknown keys).
 */
const sku = fc.oneof(fc.string({ minLength: 1, maxLength: 12 }), fc.constantFrom('', 'a\u0007b', 'x'.repeat(200), 'x'.repeat(201), 'tab\tsku', '\ud800', 'a\udc00b', '\ud83d\ude00', '\ude00\ud83d'), fc.integer())
const value = fc.oneof(
  fc.double(),
  fc.constant(null),
  fc.integer({ min: -1000, max: 1000 }),
  fc.constantFrom(1e15, -1e15, 1.0000001e15, -1e16, '3', true, undefined),
)
const values = fc.oneof(fc.array(value, { maxLength: 6 }), fc.constantFrom([], 'demand', null))
const start = fc.oneof(fc.constantFrom('2024', '2024-Q2', '2024-03', '2024-W09', '2024-03-05', '2024-Q5', '24-01', '2024-3', ''), fc.string({ maxLength: 8 }), fc.integer())
const frequency = fc.oneof(fc.constantFrom('day', 'week', 'month', 'quarter', 'year', 'hour', 'Month'), fc.integer())
const seasonLength = fc.oneof(fc.integer({ min: -2, max: 400 }), fc.constantFrom(1.5, '12', null))
const seriesLike = fc.record({ sku, firstPeriod: start, demand: values, frequency, seasonLength, extra: fc.string() }, { requiredKeys: [] })
const validSeries = fc.record(
  {
    sku: fc.string({ minLength: 1, maxLength: 20 }).filter((s) => !/[\u0000-\u001f\u007f]/.test(s)),
    firstPeriod: fc.constantFrom('2024', '2024-Q2', '2024-03', '2024-W09', '2024-03-05'),
    demand: fc.array(fc.oneof(fc.constant(null), fc.double({ min: -1e15, max: 1e15, noNaN: true })), { minLength: 1, maxLength: 30 }),
    frequency: fc.constantFrom('day', 'week', 'month', 'quarter', 'year'),
    seasonLength: fc.integer({ min: 1, max: 366 }),
  },
  { requiredKeys: ['sku', 'demand'] },
)

describe('plain check of series items', () => {
  it('vouches only for items the schema accepts unchanged', () => {
    fc.assert(
      fc.property(fc.oneof(seriesLike, validSeries), (x) => {
        if (!isSeriesItem(x)) return
        const parsed = SeriesItem.safeParse(x)
        expect(parsed.success).toBe(true)
        // Equal values and the same keys (toEqual alone would overlook a key zod drops as undefined).
        expect(parsed.data).toEqual(x)
        expect(Object.keys(parsed.data!).sort()).toEqual(Object.keys(x).sort())
      }),
      { numRuns: 20_000 },
    )
  })

  it('agrees with the schema on valid items (so they take the fast path)', () => {
    fc.assert(
      fc.property(validSeries, (x) => {
        expect(SeriesItem.safeParse(x).success).toBe(true)
        expect(isSeriesItem(x)).toBe(true)
      }),
    )
  })

  it('gives the run body the schema gives, or leaves it to the schema', () => {
    // Optional settings, each left out more often than not; `scope` beside series and an unknown
    // field (`extra`) make the body invalid, so both are rare enough for valid bodies to occur.
    const sometimes = <T>(arb: fc.Arbitrary<T>, absentWeight: number) =>
      fc.oneof({ weight: absentWeight, arbitrary: fc.constant(undefined) }, { weight: 1, arbitrary: arb })
    const settings = fc
      .record({
        horizon: fc.oneof(fc.integer({ min: 1, max: 24 }), fc.constantFrom(0, 1.5, '12')),
        rankBy: sometimes(fc.constantFrom('mae', 'mase', 'nope'), 2),
        intervalLevels: sometimes(fc.constantFrom([80], [50, 99], [120]), 2),
        scope: sometimes(fc.constantFrom({ skus: ['A'] }, { skus: [] }, { all: true }), 8),
        replenishment: sometimes(fc.constantFrom({ leadTimePeriods: 2, serviceLevel: 0.95 }, { leadTimePeriods: 0, serviceLevel: 0.95 }), 2),
        extra: sometimes(fc.constant(1), 8),
      })
      .map((r) => Object.fromEntries(Object.entries(r).filter(([, v]) => v !== undefined)))
    let fastCount = 0
    fc.assert(
      fc.property(settings, fc.array(fc.oneof({ arbitrary: validSeries, weight: 6 }, { arbitrary: seriesLike, weight: 1 }), { maxLength: 4 }), fc.boolean(), (s, series, dup) => {
        const list = dup && series.length > 0 ? [...series, series[0]] : series
        const body = { ...s, series: list }
        const fast = parseRunSubmissionFast(body)
        if (fast === null) return
        fastCount++
        const full = RunSubmission.safeParse(body)
        expect(full.success).toBe(true)
        expect(fast).toEqual(full.data)
        expect(JSON.stringify(fast)).toBe(JSON.stringify(full.data))
      }),
      { numRuns: 10_000 },
    )
    expect(fastCount).toBeGreaterThan(20)
  })
})
