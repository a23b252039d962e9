import { describe, expect, it } from 'vitest'
import { approxEqual } from '../../../src/engine/numeric.js'
import {
  dynamicOptimisedTheta,
  estimateTheta,
  fitOptimisedTheta,
  lineOnIndex,
  optimisedTheta,
  runTheta,
  thetaForecast,
} from '../../../src/engine/theta/index.js'
import { applyAdjustment, thetaSeasonalAdjustment } from '../../../src/engine/trend/theta.js'
import { levels, levelSse, minimiseOnInterval } from '../../../src/engine/trend/level-smoothing.js'
import sm from '../fixtures/statsmodels_theta/theta.json' with { type: 'json' }
import ets from '../fixtures/statsmodels_ets/ets.json' with { type: 'json' }
import { expectEngineError, expectInputGuards, expectSane } from '../trend/spec-checks.js'

const m3 = ets.series // M3 training parts (Makridakis and Hibon 2000), carried by the ETS fixture

describe('optimised-theta and dynamic-optimised-theta: special cases', () => {
  it('rejects empty, non-finite and too-short input and a bad season length', () => {
    for (const spec of [optimisedTheta, dynamicOptimisedTheta]) {
      expectInputGuards(spec, 1)
      expectInputGuards(spec, 12)
      expectEngineError(() => spec.fit([1, 2, 3, 4, 5], { seasonLength: 0 }), 'invalid-option')
    }
  })

  it('forecasts a constant series as itself', () => {
    for (const spec of [optimisedTheta, dynamicOptimisedTheta]) {
      const fc = expectSane(spec.fit(new Array(30).fill(6), { seasonLength: 12 }), 30)
      for (const v of fc) expect(approxEqual(v, 6, 1e-9)).toBe(true)
    }
  })

  it('is simple exponential smoothing when theta = 1', () => {
    const y = m3.N1500.values
    const alpha = 0.3
    const fit = fitOptimisedTheta('optimised-theta', false, y, 1, { params: { alpha, theta: 1, startLevel: y[0]! } })
    const path = levels(y, alpha) // SES with level[0] = y[0]
    const fc = fit.forecast(5)
    for (const v of fc) expect(approxEqual(v, path[y.length - 1]!, 1e-12)).toBe(true)
  })
})

describe('optimised Theta: hand-checkable properties (Fiorucci et al. 2016)', () => {
  it('closed-form forecasts equal the recursion run on with zero errors', () => {
    const y = m3.N0700.values
    const p = { alpha: 0.37, theta: 2.6, startLevel: y[0]! + 10 }
    const run = runTheta(y, p, false)
    const n = y.length
    const w = 1 - 1 / p.theta
    let level = run.level
    const iterated: number[] = []
    for (let t = n + 1; t <= n + 8; t++) {
      const decay = Math.pow(1 - p.alpha, t - 1)
      const mu = level + w * (decay * run.intercept + ((1 - decay * (1 - p.alpha)) / p.alpha) * run.slope)
      iterated.push(mu)
      level = p.alpha * mu + (1 - p.alpha) * level
    }
    const closed = thetaForecast(run, p, n, 8)
    closed.forEach((v, i) => expect(approxEqual(v, iterated[i]!, 1e-12)).toBe(true))
  })

  it("keeps DOTM's dynamic line equal to least squares on the data so far", () => {
    const y = m3.N1500.values
    for (const t of [2, 3, 7, 20, y.length]) {
      const run = runTheta(y.slice(0, t), { alpha: 0.5, theta: 2, startLevel: y[0]! }, true)
      const ols = lineOnIndex(y.slice(0, t))
      expect(approxEqual(run.slope, ols.slope, 1e-9, 1e-9)).toBe(true)
      expect(approxEqual(run.intercept, ols.intercept, 1e-9, 1e-9)).toBe(true)
    }
  })

  it('fits at least as well in sample as the standard Theta it contains', () => {
    for (const id of ['N0001', 'N0700', 'N1500', 'N2000'] as const) {
      const y = m3[id].values
      const alpha = minimiseOnInterval((a) => levelSse(y, a), 0.001, 1)
      const standard = runTheta(y, { alpha, theta: 2, startLevel: y[0]! }, false).sse
      const optimised = runTheta(y, estimateTheta(y, false), false).sse
      expect(optimised).toBeLessThanOrEqual(standard * (1 + 1e-9))
    }
  })

  it('widens its variance with the horizon as sigma^2 (1 + (h - 1) alpha^2)', () => {
    const fit = optimisedTheta.fit(m3.N0001.values, { seasonLength: 1 })
    const v = fit.forecastVariance!(4)
    const alpha = fit.params.levelWeight as number
    for (let h = 2; h <= 4; h++) expect(approxEqual(v[h - 1]! / v[0]!, 1 + (h - 1) * alpha * alpha, 1e-12)).toBe(true)
  })
})

// Source: statsmodels 0.13.5 ThetaModel (fixture from scripts/fixtures/statsmodels_theta.py).
// With theta = 2, statsmodels' alpha and l_0 = Y_1, OTM is the standard Theta method; the two
// closed forms differ only by the starting-value term (1/2)(1 - alpha)^n (A_n + B_n) (statsmodels
// writes the drift multiplier as h - 1 + 1/alpha - (1 - alpha)^n / alpha, with no A_n term), so
// ours must equal statsmodels' forecast plus that term, re-seasonalised. Tolerance 1e-9 relative.
describe('optimised-theta at theta = 2 against statsmodels ThetaModel', () => {
  for (const [name, m] of [['Nile', 1], ['AirPassengers', 12], ['AirPassengersShifted', 12]] as const) {
    it(`matches the standard Theta forecasts on ${name}`, () => {
      const ref = sm[name]
      const y = ref.series
      const adjustment = thetaSeasonalAdjustment(y, m)
      const { adjusted, figure, multiplicative } = applyAdjustment(y, adjustment, m)
      expect(figure.length > 0).toBe(ref.deseasonalized)
      const line = lineOnIndex(adjusted)
      expect(approxEqual(line.slope, ref.b0, 1e-9)).toBe(true)
      const p = { alpha: ref.alpha, theta: 2, startLevel: adjusted[0]! }
      const fit = fitOptimisedTheta('optimised-theta', false, y, m, { params: p })
      const n = y.length
      const offset = 0.5 * Math.pow(1 - ref.alpha, n) * (line.intercept + line.slope)
      const fc = fit.forecast(ref.forecast.length)
      fc.forEach((v, i) => {
        const s = figure.length === 0 ? (multiplicative ? 1 : 0) : figure[(n + i) % m]!
        const expected = multiplicative ? ref.forecast[i]! + offset * s : ref.forecast[i]! + offset
        expect(approxEqual(v, expected, 1e-9), `step ${i + 1}: ${v} vs ${expected}`).toBe(true)
      })
    })
  }
})

describe('optimised Theta on M3 training parts', () => {
  for (const spec of [optimisedTheta, dynamicOptimisedTheta]) {
    it(`${spec.name} fits every stored M3 series sanely`, () => {
      for (const s of Object.values(m3)) {
        const fit = spec.fit(s.values, { seasonLength: s.seasonLength })
        expectSane(fit, s.values.length, s.horizon)
        const theta = fit.params.theta as number
        expect(theta).toBeGreaterThanOrEqual(1)
        expect(theta).toBeLessThanOrEqual(10)
      }
    })
  }
})
