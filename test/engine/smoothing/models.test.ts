import { describe, expect, it } from 'vitest'
import { EngineInputError } from '../../../src/engine/errors.js'
import { approxEqual } from '../../../src/engine/numeric.js'
import { smoothingModels } from '../../../src/engine/smoothing/index.js'
import type { ModelFit, ModelSpec } from '../../../src/engine/types.js'
import { smoothingFixture } from './fixture.js'

const byName = (name: string): ModelSpec => smoothingModels.find((s) => s.name === name)!
const quarterly = { seasonLength: 4 }

/** Deterministic noise (a linear congruential generator), for shape checks only. */
function noise(n: number, seed = 7): number[] {
  let s = seed
  return Array.from({ length: n }, () => {
    s = (s * 1103515245 + 12345) % 2147483648
    return s / 2147483648 - 0.5
  })
}

function errorOf(f: () => unknown): EngineInputError {
  try {
    f()
  } catch (err) {
    if (err instanceof EngineInputError) return err
    throw err
  }
  throw new Error('expected an EngineInputError')
}

function expectFinite(fit: ModelFit, horizon: number): void {
  fit.fitted.forEach((v, i) => {
    if (!(fit.model === 'level-smoothing' && i === 0)) expect(Number.isFinite(v)).toBe(true)
  })
  for (const v of fit.forecast(horizon)) expect(Number.isFinite(v)).toBe(true)
  for (const v of fit.forecastVariance?.(horizon) ?? []) expect(Number.isFinite(v) && v >= 0).toBe(true)
}

describe('smoothingModels: registry', () => {
  it('lists the nine smoothing models with their flags', () => {
    expect(smoothingModels.map((s) => s.name)).toEqual([
      'level-smoothing', 'trend-smoothing', 'damped-trend-smoothing', 'trend-smoothing-additive-season', 'trend-smoothing-multiplicative-season',
      'damped-trend-smoothing-additive-season', 'damped-trend-smoothing-multiplicative-season',
      'level-smoothing-additive-season', 'level-smoothing-multiplicative-season',
    ])
    expect(smoothingModels.filter((s) => s.requiresPositive).map((s) => s.name)).toEqual([
      'trend-smoothing-multiplicative-season', 'damped-trend-smoothing-multiplicative-season', 'level-smoothing-multiplicative-season',
    ])
    expect(smoothingModels.filter((s) => s.seasonal).length).toBe(6)
    expect(byName('level-smoothing-additive-season').family).toBe('seasonal')
    expect(byName('level-smoothing-additive-season').minLength(4)).toBe(8)
    // Two full seasons for seasonal models (common practice).
    expect(byName('trend-smoothing-additive-season').minLength(12)).toBe(24)
    expect(byName('trend-smoothing').minLength(12)).toBe(3)
    expect(byName('level-smoothing').minLength(12)).toBe(2)
  })
})

describe('smoothingModels: special cases', () => {
  it('rejects an empty series', () => {
    for (const s of smoothingModels) expect(errorOf(() => s.fit([], quarterly)).code).toBe('empty-series')
  })
  it('rejects short input with one message form', () => {
    const e = errorOf(() => byName('trend-smoothing-additive-season').fit(Array(23).fill(5), { seasonLength: 12 }))
    expect(e.code).toBe('series-too-short')
    expect(e.message).toBe('trend-smoothing-additive-season needs 24 periods, has 23')
    expect(errorOf(() => byName('trend-smoothing').fit([1, 2], quarterly)).message).toBe('trend-smoothing needs 3 periods, has 2')
    expect(errorOf(() => byName('level-smoothing').fit([1], quarterly)).message).toBe('level-smoothing needs 2 periods, has 1')
  })
  it('rejects NaN and Infinity with the offending index', () => {
    for (const s of smoothingModels) {
      const y = Array.from({ length: 12 }, (_, i) => 10 + i)
      y[5] = NaN
      const e = errorOf(() => s.fit(y, quarterly))
      expect(e.code).toBe('non-finite-value')
      expect(e.field).toBe('demand[5]')
    }
  })
  it('multiplicative models reject zero and negative values', () => {
    for (const name of ['trend-smoothing-multiplicative-season', 'damped-trend-smoothing-multiplicative-season', 'level-smoothing-multiplicative-season']) {
      const y = Array.from({ length: 12 }, (_, i) => 10 + i)
      y[3] = 0
      expect(errorOf(() => byName(name).fit(y, quarterly)).code).toBe('not-positive')
      y[3] = -2
      expect(errorOf(() => byName(name).fit(y, quarterly)).field).toBe('demand[3]')
    }
  })
  it('seasonal models need a season length of at least 2', () => {
    expect(errorOf(() => byName('trend-smoothing-additive-season').fit(Array(30).fill(1), { seasonLength: 1 })).code).toBe('invalid-option')
  })
  // Hand-checkable: a flat series forecasts its level, with zero error variance.
  it('a constant series forecasts the constant', () => {
    for (const s of smoothingModels) {
      const fit = s.fit(Array(24).fill(37.5), quarterly)
      for (const v of fit.forecast(6)) expect(approxEqual(v, 37.5, 1e-12)).toBe(true)
      for (const v of fit.forecastVariance?.(6) ?? []) expect(v).toBeLessThan(1e-20)
      expectFinite(fit, 6)
    }
  })
  it('an all-zero series forecasts zero (additive models)', () => {
    for (const s of smoothingModels.filter((x) => !x.requiresPositive)) {
      const fit = s.fit(Array(16).fill(0), quarterly)
      expect(fit.forecast(3)).toEqual([0, 0, 0])
      expectFinite(fit, 3)
    }
  })
  it('tiny and huge values give finite results that scale with the data', () => {
    const base = noise(40).map((e, t) => 100 + t + 10 * Math.sin((2 * Math.PI * t) / 4) + 5 * e)
    for (const s of smoothingModels) {
      const ref = s.fit(base, quarterly).forecast(5)
      for (const c of [1e-300, 1e-12, 1e250]) {
        const fit = s.fit(base.map((v) => v * c), quarterly)
        expectFinite(fit, 5)
        fit.forecast(5).forEach((v, i) => expect(approxEqual(v / c, ref[i]!, 1e-8)).toBe(true))
      }
    }
  })
  it('noisy seasonal data: no NaN anywhere, variances non-decreasing', () => {
    const y = noise(60, 3).map((e, t) => 50 + 0.3 * t + 8 * Math.cos((2 * Math.PI * t) / 12) + 6 * e)
    for (const s of smoothingModels) {
      const fit = s.fit(y, { seasonLength: 12 })
      expectFinite(fit, 24)
      const v = fit.forecastVariance?.(24)
      if (v) for (let h = 1; h < v.length; h++) expect(v[h]).toBeGreaterThanOrEqual(v[h - 1]!)
      expect(fit.fitted.length).toBe(y.length)
    }
  })
  // Found by fuzzing: an outlier in the first season gave a steep negative start trend
  // that made every multiplicative fit non-finite; the fitter now retries from a flat trend.
  it('multiplicative models survive an outlier at the start', () => {
    const y = [1054, 96, 96, 99, 100, 99, 104, 96, 104, 96, 103, 101, 101, 870, 98, 99, 104, 105, 105, 100]
    for (const name of ['trend-smoothing-multiplicative-season', 'damped-trend-smoothing-multiplicative-season']) {
      expectFinite(byName(name).fit(y, { seasonLength: 2 }), 4)
    }
  })
  it('fitting is deterministic', () => {
    const y = noise(48, 11).map((e, t) => 20 + t + 4 * e)
    for (const s of smoothingModels) {
      const a = s.fit(y, quarterly)
      const b = s.fit(y, quarterly)
      expect(a.params).toEqual(b.params)
      expect(a.forecast(8)).toEqual(b.forecast(8))
    }
  })
  it('multiplicative models leave intervals to the caller (no analytical variance)', () => {
    const y = noise(24, 5).map((e) => 50 + 5 * e)
    expect(byName('trend-smoothing-multiplicative-season').fit(y, quarterly).forecastVariance).toBeUndefined()
    expect(byName('trend-smoothing-additive-season').fit(y, quarterly).forecastVariance).toBeDefined()
  })
})

describe('smoothingModels: hand-checkable cases', () => {
  // A straight line y = 5 + 3t: the least-squares start is exact, so Holt has zero
  // in-sample error and extends the line.
  it('Holt forecasts a straight line exactly', () => {
    const y = Array.from({ length: 30 }, (_, t) => 5 + 3 * t)
    const fit = byName('trend-smoothing').fit(y, quarterly)
    fit.forecast(4).forEach((v, i) => expect(approxEqual(v, 5 + 3 * (30 + i), 1e-9)).toBe(true))
    fit.fitted.forEach((v, t) => expect(approxEqual(v, y[t]!, 1e-9)).toBe(true))
  })
  // Line plus a fixed quarterly pattern summing to zero: the seasonal start recovers
  // both exactly, so additive Holt-Winters continues the pattern.
  it('additive Holt-Winters continues a line plus a fixed seasonal pattern', () => {
    const pattern = [6, -2, -5, 1]
    const y = Array.from({ length: 32 }, (_, t) => 100 + 0.5 * t + pattern[t % 4]!)
    const fit = byName('trend-smoothing-additive-season').fit(y, quarterly)
    fit.forecast(8).forEach((v, i) => {
      const t = 32 + i
      expect(approxEqual(v, 100 + 0.5 * t + pattern[t % 4]!, 1e-9)).toBe(true)
    })
  })
  // Level times a fixed pattern with mean 1: multiplicative Holt-Winters continues it.
  it('multiplicative Holt-Winters continues a flat level times a fixed pattern', () => {
    const pattern = [1.2, 0.9, 0.7, 1.2]
    const y = Array.from({ length: 24 }, (_, t) => 80 * pattern[t % 4]!)
    const fit = byName('trend-smoothing-multiplicative-season').fit(y, quarterly)
    fit.forecast(8).forEach((v, i) => expect(approxEqual(v, 80 * pattern[(24 + i) % 4]!, 1e-9)).toBe(true))
  })
  it('SES on a random walk chooses a large alpha and forecasts near the last value', () => {
    let level = 100
    const y = noise(80, 19).map((e) => (level += 10 * e))
    const fit = byName('level-smoothing').fit(y, quarterly)
    expect(fit.params.levelWeight as number).toBeGreaterThan(0.8)
    expect(Math.abs(fit.forecast(1)[0]! - y[79]!)).toBeLessThan(2)
  })
  // sigma^2 = SSE / (n - k) (HKOS 2008, ch. 6), k = alpha + initial level for SES; the first
  // point seeds the level, so n counts the remaining points.
  it('SES one-step variance is SSE / (n - 1 - 2)', () => {
    const y = noise(30, 23).map((e) => 10 + e)
    const fit = byName('level-smoothing').fit(y, quarterly)
    let sse = 0
    for (let t = 1; t < y.length; t++) sse += (y[t]! - fit.fitted[t]!) ** 2
    expect(approxEqual(fit.forecastVariance!(1)[0]!, sse / (29 - 2), 1e-12)).toBe(true)
  })
  it('starting from given parameters (refit) lands on the same optimum', () => {
    const y = noise(48, 29).map((e, t) => 30 + 0.2 * t + 3 * Math.sin((2 * Math.PI * t) / 4) + 2 * e)
    const spec = byName('trend-smoothing-additive-season')
    const first = spec.fit(y, quarterly)
    const again = spec.fit(y, { ...quarterly, initialParams: first.params })
    const sse = (f: ModelFit) => f.fitted.reduce((a, v, t) => a + (y[t]! - v) ** 2, 0)
    expect(sse(again)).toBeLessThanOrEqual(sse(first) * 1.001)
  })
})

// Sanity check, not a certified value: our SSE (bounded search, phi <= 0.98, initial
// states re-estimated for the parameters found) against statsmodels 0.13.5's own optimised
// fit (which estimates all initial states) on R `datasets` series. Measured ratios 0.946 to
// 1.042 (AirPassengers multiplicative 1.001, from 1.032 with heuristic multiplicative
// states); the 1.05 bound is the brief's "no worse than 1.05x".
describe('smoothingModels: in-sample SSE near statsmodels optimised fits', () => {
  for (const c of smoothingFixture.optimised) {
    it(`${c.data} ${c.model}`, () => {
      const fit = byName(c.model).fit(c.series, { seasonLength: c.seasonLength })
      let sse = 0
      fit.fitted.forEach((v, t) => {
        if (!Number.isNaN(v)) sse += (c.series[t]! - v) ** 2
      })
      expect(sse / c.sse).toBeLessThan(1.05)
    })
  }
})
