import { describe, expect, it } from 'vitest'
import { approxEqual } from '../../../src/engine/numeric.js'
import { sseLevel, sseSeasonalAdd, sseSeasonalMul, sseTrend, sseTrendProfiled } from '../../../src/engine/smoothing/kernels.js'
import { leastSquaresStates, leastSquaresWorkspace } from '../../../src/engine/smoothing/least-squares-states.js'
import { runSmoothing } from '../../../src/engine/smoothing/recursions.js'
import { smoothingFixture } from './fixture.js'

// The optimiser's kernels are rearranged copies of runSmoothing (which is checked against
// statsmodels in recursions.test.ts); here they must give the same SSE.
// Tolerance 1e-10 relative: rounding of the rearranged algebra only.
describe('SSE kernels agree with runSmoothing', () => {
  for (const c of smoothingFixture.recursions) {
    it(c.name, () => {
      const y = Float64Array.from(c.series)
      const phi = c.phi ?? 1
      const r = runSmoothing(c.series, {
        alpha: c.alpha,
        beta: c.beta ?? 0,
        gamma: c.gamma ?? 0,
        phi,
        seasonLength: c.seasonLength ?? undefined,
        seasonal: c.seasonal ?? undefined,
        initial: { level: c.initial.level, trend: c.initial.trend ?? 0, seasonal: c.initial.seasonal ?? undefined },
      })
      let sse: number
      if (c.model === 'ses') sse = sseLevel(y, c.alpha, c.initial.level, 0)
      else if (c.model === 'holt') sse = sseTrend(y, c.alpha, c.beta!, phi, c.initial.level, c.initial.trend!)
      else {
        const s0 = Float64Array.from(c.initial.seasonal!)
        const scratch = new Float64Array(s0.length)
        const kernel = c.seasonal === 'add' ? sseSeasonalAdd : sseSeasonalMul
        sse = kernel(y, c.alpha, c.beta!, c.gamma!, phi, c.initial.level, c.initial.trend!, s0, scratch)
        expect(Array.from(s0)).toEqual(c.initial.seasonal) // the start states are not modified
      }
      expect(approxEqual(sse, r.sse, 1e-10)).toBe(true)
    })
  }

  it('returns +Infinity, not NaN, when the multiplicative base is not positive', () => {
    const y = Float64Array.from([1, 2, 3, 4])
    const s0 = Float64Array.from([1, 1])
    expect(sseSeasonalMul(y, 0.5, 0.1, 0.1, 1, -1, 0, s0, new Float64Array(2))).toBe(Infinity)
  })
  it('returns +Infinity on overflow', () => {
    const y = Float64Array.from([1e300, -1e300, 1e300])
    expect(sseLevel(y, 0.5, 0, 0)).toBe(Infinity)
  })
})

// The profiled trend kernel is the error sum at the least-squares initial states, found
// in one pass: it must equal sseTrend at the states leastSquaresStates solves for, and no
// other start may do better. Series: the fixture's trend cases (R `datasets`, statsmodels
// 0.13.5 parameters). Tolerance 1e-8 relative: the one-pass form subtracts g'A^-1 g.
describe('sseTrendProfiled', () => {
  const cases = smoothingFixture.recursions.filter((c) => c.model === 'holt')
  it('has cases to check', () => expect(cases.length).toBeGreaterThan(0))
  for (const c of cases) {
    it(c.name, () => {
      const scale = Math.max(...c.series.map(Math.abs))
      const y = Float64Array.from(c.series, (v) => v / scale)
      const phi = c.phi ?? 1
      const states = new Float64Array(2)
      const profiled = sseTrendProfiled(y, c.alpha, c.beta!, phi, states)
      const ls = new Float64Array(2)
      expect(leastSquaresStates(y, c.alpha, c.beta!, 0, phi, true, 1, new Float64Array(leastSquaresWorkspace(y.length, 1)), ls)).toBe(true)
      expect(approxEqual(states[0]!, ls[0]!, 1e-8)).toBe(true)
      expect(approxEqual(states[1]!, ls[1]!, 1e-6, 1e-12)).toBe(true)
      expect(approxEqual(profiled, sseTrend(y, c.alpha, c.beta!, phi, ls[0]!, ls[1]!), 1e-8)).toBe(true)
      const given = sseTrend(y, c.alpha, c.beta!, phi, c.initial.level / scale, c.initial.trend! / scale)
      expect(profiled).toBeLessThanOrEqual(given * (1 + 1e-12))
    })
  }
})
