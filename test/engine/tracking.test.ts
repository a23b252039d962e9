import { describe, expect, it } from 'vitest'
import { readFileSync } from 'node:fs'
import { approxEqual } from '../../src/engine/numeric.js'
import {
  EngineInputError,
  pairsAtLag,
  poolAccuracy,
  smoothedTrackingLimit,
  smoothedTrackingSignals,
  summariseAccuracy,
} from '../../src/engine/index.js'

// Made by test/engine/fixtures/r-replenishment/make.R (base R arithmetic; R version inside the JSON).
const ref = JSON.parse(
  readFileSync(new URL('./fixtures/r-replenishment/replenishment.json', import.meta.url), 'utf8'),
).tracking as { actual: number[]; forecast: number[]; mae: number; bias: number; mape: number; trackingSignal: number }

const periods = (actual: number[], forecast: number[]) =>
  actual.map((a, i) => ({ period: `2025-${String(i + 1).padStart(2, '0')}`, actualDemand: a, forecastDemand: forecast[i]! }))

describe('summariseAccuracy', () => {
  it('is empty without scored periods', () => {
    expect(summariseAccuracy([])).toEqual({
      scoredPeriods: 0, mae: null, bias: null, mape: null, trackingSignal: null, smoothedTrackingSignal: null,
      flagged: false, flaggedBy: [], trackingLimit: 4, smoothedTrackingLimit: smoothedTrackingLimit(0.1),
    })
  })

  it('perfect forecasts: zero errors, tracking signal 0, MAPE 0', () => {
    const s = summariseAccuracy(periods([5, 6, 7, 8, 9], [5, 6, 7, 8, 9]))
    expect(s).toMatchObject({ scoredPeriods: 5, mae: 0, bias: 0, mape: 0, trackingSignal: 0, flagged: false })
  })

  it('all-zero actuals leave MAPE undefined (null), never NaN', () => {
    const s = summariseAccuracy(periods([0, 0, 0], [1, 2, 0]))
    expect(s.mape).toBeNull()
    expect(s.mae).toBe(1)
    expect(s.bias).toBe(-1)
    expect(s.trackingSignal).toBe(-3)
  })

  it('rejects non-finite input', () => {
    expect(() => summariseAccuracy(periods([1, Number.NaN], [1, 1]))).toThrow(EngineInputError)
  })

  // Hand-computed: deviations (actual - forecast) 5, -2, 10, 4, -3, 10; sum 24; sum of |e| 34;
  // MAE = 34 / 6 = 5.6667; bias = 24 / 6 = 4 (positive: under-forecast);
  // TS = 24 / 5.6667 = 4.2353 > 4, flagged. MAPE skips the zero actual:
  // 100 * (5/100 + 2/96 + 10/110 + 4/104 + 10/120) / 5 = 5.6707. Base R agrees (fixture).
  it('matches the hand-computed tracking signal', () => {
    const s = summariseAccuracy(periods(ref.actual, ref.forecast))
    expect(s.scoredPeriods).toBe(6)
    expect(s.mae).toBeCloseTo(5.6667, 4)
    expect(s.bias).toBe(4)
    expect(s.trackingSignal).toBeCloseTo(4.2353, 4)
    expect(s.mape).toBeCloseTo(5.6707, 4)
    expect(s.flagged).toBe(true)
    expect(approxEqual(s.trackingSignal!, ref.trackingSignal, 1e-12)).toBe(true)
    expect(approxEqual(s.mape!, ref.mape, 1e-12)).toBe(true)
  })

  // The rule |TS| > 4 with n >= 4 could never fire at n = 4, where |TS| <= 4. Hand-computed: an item
  // under-forecast by 10, 20, 5, 15 in its first 4 periods: sum 50, MAE 12.5, TS = 50 / 12.5 = 4 >= 4.
  it('flags an item biased the same way in each of its first 4 periods', () => {
    const s = summariseAccuracy(periods([110, 120, 105, 115], [100, 100, 100, 100]))
    expect(s.trackingSignal).toBe(4)
    expect(s.flagged).toBe(true)
    expect(s.flaggedBy).toContain('tracking-signal')
    // One period the other way (10, 20, -5, 15): sum 40, MAE 12.5, TS 3.2: not flagged by the cumulative
    // signal. The smoothed one (w 0.1) does flag it: E = 3.399, M = 4.299, T = 0.7907 > 0.5635.
    const mixed = summariseAccuracy(periods([110, 120, 95, 115], [100, 100, 100, 100]))
    expect(mixed.trackingSignal).toBeCloseTo(3.2, 12)
    expect(mixed.smoothedTrackingSignal).toBeCloseTo(3.399 / 4.299, 12)
    expect(mixed.flaggedBy).toEqual(['smoothed-tracking-signal'])
  })

  it('never flags with fewer than ceil(limit) periods (|TS| <= n)', () => {
    const s = summariseAccuracy(periods([10, 10, 10], [1, 1, 1]))
    expect(s.trackingSignal).toBe(3)
    expect(summariseAccuracy(periods([10, 10, 10, 10, 10], [1, 1, 1, 1, 1])).flagged).toBe(true)
    expect(summariseAccuracy(periods([10, 10, 10, 10, 10], [1, 1, 1, 1, 1]), { trackingLimit: 6 }).flagged).toBe(false)
    // A limit of 4.5 needs 5 periods; 5 same-sign deviations give TS = 5 >= 4.5.
    expect(summariseAccuracy(periods([10, 10, 10, 10], [1, 1, 1, 1]), { trackingLimit: 4.5 }).flagged).toBe(false)
    expect(summariseAccuracy(periods([10, 10, 10, 10, 10], [1, 1, 1, 1, 1]), { trackingLimit: 4.5 }).flagged).toBe(true)
  })

  it('an unbiased forecast with alternating errors stays inside the limit', () => {
    const s = summariseAccuracy(periods([12, 8, 12, 8, 12, 8, 12, 8], [10, 10, 10, 10, 10, 10, 10, 10]))
    expect(s.trackingSignal).toBe(0)
    expect(s.flagged).toBe(false)
  })
})

// Source: test/engine/fixtures/r-trigg/make.R (base R stats::filter, recursive; R version inside the JSON).
const trigg = JSON.parse(readFileSync(new URL('./fixtures/r-trigg/trigg.json', import.meta.url), 'utf8')) as {
  weight: number
  deviations: number[]
  signal: number[]
  limit: number
}

describe('smoothed tracking signal (Trigg 1964)', () => {
  it('rejects a weight outside (0, 1)', () => {
    expect(() => smoothedTrackingSignals([1], 0)).toThrow(EngineInputError)
    expect(() => smoothedTrackingLimit(1)).toThrow(EngineInputError)
  })

  // Hand-computed with w = 0.5: e = +2: E = 1, M = 1, T = 1; e = -2: E = -1 + 0.5 = -0.5,
  // M = 1 + 0.5 = 1.5, T = -1/3. Zero deviations keep T at 0.
  it('matches hand arithmetic', () => {
    expect(smoothedTrackingSignals([2, -2], 0.5)).toEqual([1, -0.5 / 1.5])
    expect(smoothedTrackingSignals([0, 0], 0.5)).toEqual([0, 0])
  })

  // Hand-computed: sqrt(0.1 / 1.9) = 0.2294157, / sqrt(2 / pi) = 0.2875311, x 1.959964 = 0.5635484.
  it('matches base R for the signal after each deviation and for the limit', () => {
    const got = smoothedTrackingSignals(trigg.deviations, trigg.weight)
    got.forEach((t, i) => expect(approxEqual(t, trigg.signal[i]!, 1e-12)).toBe(true))
    expect(approxEqual(smoothedTrackingLimit(0.1), trigg.limit, 1e-12)).toBe(true)
    expect(smoothedTrackingLimit(0.1)).toBeCloseTo(0.5635484, 6)
  })

  it('flags the drifting item by the smoothed signal once it passes the limit', () => {
    const actual = trigg.deviations.map((e) => 100 + e)
    const s = summariseAccuracy(periods(actual, actual.map(() => 100)))
    expect(s.smoothedTrackingSignal).toBeCloseTo(0.8954620, 6)
    expect(s.flaggedBy).toContain('smoothed-tracking-signal')
    // After 5 periods (T = -0.03) it is not flagged by the smoothed signal.
    expect(summariseAccuracy(periods(actual.slice(0, 5), actual.slice(0, 5).map(() => 100))).flaggedBy).toEqual([])
  })
})

describe('poolAccuracy', () => {
  // Hand-computed: SKU A deviations +10, -10 (actuals 110, 90); SKU B +5 (actual 5); SKU C none.
  // MAE = 25 / 3, bias = 5 / 3, WAPE = 100 * 25 / 205 = 12.195 %.
  it('pools the periods of every SKU', () => {
    const pooled = poolAccuracy([periods([110, 90], [100, 100]), periods([5], [0]), []])
    expect(pooled).toMatchObject({ skus: 2, scoredPeriods: 3, flaggedSkus: 0 })
    expect(pooled.mae).toBeCloseTo(25 / 3, 12)
    expect(pooled.bias).toBeCloseTo(5 / 3, 12)
    expect(pooled.wape).toBeCloseTo((100 * 25) / 205, 12)
    expect(poolAccuracy([periods([0], [1])]).wape).toBeNull()
  })
})

describe('pairsAtLag', () => {
  const forecast = (runId: string, first: number, values: number[]) => ({
    runId,
    points: new Map(values.map((v, i) => [first + i, v] as [number, number])),
  })
  const actuals = new Map([
    [10, 100],
    [11, 110],
    [12, 120],
  ])
  const actual = (o: number) => actuals.get(o) ?? null

  // Forecasts made at origins 9, 10 and 11 (first points 10, 11, 12). Lag 2 pairs the point two
  // periods after each origin: origin 9 -> period 11 (value 21), origin 10 -> period 12 (value 32);
  // origin 11 -> period 13 has no actual yet.
  it('pairs each forecast with the actual k periods after its origin', () => {
    const fs = [forecast('r3', 12, [43, 44]), forecast('r2', 11, [31, 32]), forecast('r1', 10, [20, 21, 22])]
    expect(pairsAtLag(fs, actual, 2)).toEqual([
      { ordinal: 11, runId: 'r1', forecastDemand: 21, actualDemand: 110 },
      { ordinal: 12, runId: 'r2', forecastDemand: 32, actualDemand: 120 },
    ])
    expect(pairsAtLag(fs, actual, 1).map((p) => [p.ordinal, p.runId])).toEqual([
      [10, 'r1'],
      [11, 'r2'],
      [12, 'r3'],
    ])
  })

  it('takes the newest of two forecasts with one origin, and refuses a lag below 1', () => {
    const fs = [forecast('new', 10, [50]), forecast('old', 10, [40])]
    expect(pairsAtLag(fs, actual, 1)).toEqual([{ ordinal: 10, runId: 'new', forecastDemand: 50, actualDemand: 100 }])
    expect(() => pairsAtLag(fs, actual, 0)).toThrow(EngineInputError)
  })
})
