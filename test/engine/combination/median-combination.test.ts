import { describe, expect, it } from 'vitest'
import {
  fitAdjustedDamped,
  fitMedianCombination,
  medianCombination,
  medianOf,
} from '../../../src/engine/combination/index.js'
import { approxEqual } from '../../../src/engine/numeric.js'
import { fitStateSpaceSmoothing } from '../../../src/engine/state-space/index.js'
import { fitOptimisedTheta } from '../../../src/engine/theta/index.js'
import ets from '../fixtures/statsmodels_ets/ets.json' with { type: 'json' }
import { expectInputGuards, expectSane } from '../trend/spec-checks.js'

const m3 = ets.series // M3 training parts (Makridakis and Hibon 2000), carried by the ETS fixture

describe('median-combination', () => {
  it('rejects empty, non-finite and too-short input', () => {
    expectInputGuards(medianCombination, 1)
    expectInputGuards(medianCombination, 12)
  })

  it('takes the middle value, the mean of the middle two, and ignores NaN', () => {
    expect(medianOf([3, 1, 2])).toBe(2)
    expect(medianOf([4, 1])).toBe(2.5)
    expect(medianOf([NaN, 5, 1, 9])).toBe(5)
    expect(medianOf([NaN])).toBeNaN()
  })

  it('forecasts a constant series as itself', () => {
    const fc = expectSane(medianCombination.fit(new Array(30).fill(4), { seasonLength: 12 }), 30)
    for (const v of fc) expect(approxEqual(v, 4, 1e-6)).toBe(true)
  })

  it("forecasts, at every step, the median of its three members' forecasts and variances", () => {
    const s = m3.N1500
    const fit = fitMedianCombination(s.values, s.seasonLength)
    expect(fit.members.map((m) => m.model)).toEqual(['state-space-smoothing', 'optimised-theta', 'damped-trend-smoothing'])
    // The members, fitted independently of the combination.
    const members = [
      fitStateSpaceSmoothing(s.values, s.seasonLength),
      fitOptimisedTheta('optimised-theta', false, s.values, s.seasonLength),
      fitAdjustedDamped(s.values, s.seasonLength),
    ]
    const point = fit.forecast(s.horizon)
    const variance = fit.forecastVariance!(s.horizon)
    const memberPoints = members.map((m) => m.forecast(s.horizon))
    const memberVariances = members.map((m) => m.forecastVariance!(s.horizon))
    for (let h = 0; h < s.horizon; h++) {
      const p = memberPoints.map((f) => f[h]!).sort((a, b) => a - b)
      expect(point[h]).toBe(p[1])
      const v = memberVariances.map((f) => f[h]!).sort((a, b) => a - b)
      expect(variance[h]).toBe(v[1])
    }
    expectSane(fit, s.values.length, s.horizon)
  })

  it('repeats a clear monthly pattern', () => {
    const pattern = [10, 12, 15, 30, 60, 90, 95, 70, 40, 20, 12, 10]
    const series = Array.from({ length: 48 }, (_, t) => pattern[t % 12]! * (1 + 0.01 * (((t * 7) % 5) - 2)))
    const fc = medianCombination.fit(series, { seasonLength: 12 }).forecast(12)
    fc.forEach((v, i) => expect(Math.abs(v - pattern[i]!) / pattern[i]!).toBeLessThan(0.1))
  })
})
