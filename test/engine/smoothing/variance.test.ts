import { describe, expect, it } from 'vitest'
import { approxEqual } from '../../../src/engine/numeric.js'
import { additiveErrorVariance } from '../../../src/engine/smoothing/index.js'
import { smoothingFixture } from './fixture.js'

describe('additiveErrorVariance: special cases', () => {
  it('returns no values for a zero or negative horizon', () => {
    const shape = { alpha: 0.5, beta: 0, gamma: 0, phi: 1, seasonLength: 1 }
    expect(additiveErrorVariance(shape, 2, 0)).toEqual([])
    expect(additiveErrorVariance(shape, 2, -3)).toEqual([])
  })
  it('maps a non-finite or negative sigma^2 to zero, never NaN', () => {
    const shape = { alpha: 0.5, beta: 0.2, gamma: 0, phi: 1, seasonLength: 1 }
    expect(additiveErrorVariance(shape, NaN, 3)).toEqual([0, 0, 0])
    expect(additiveErrorVariance(shape, -1, 2)).toEqual([0, 0])
  })
})

describe('additiveErrorVariance: published formulas', () => {
  // Source: Hyndman, Koehler, Ord and Snyder (2008), Table 6.1, class 1, ANN:
  // v_h = sigma^2 [1 + (h - 1) alpha^2] (from memory; also FPP3 Table 8.8).
  it('SES (ANN): sigma^2 [1 + (h - 1) alpha^2]', () => {
    const alpha = 0.3
    const sigma2 = 4
    const v = additiveErrorVariance({ alpha, beta: 0, gamma: 0, phi: 1, seasonLength: 1 }, sigma2, 6)
    v.forEach((x, i) => expect(approxEqual(x, sigma2 * (1 + i * alpha * alpha), 1e-14)).toBe(true))
  })
  // Source: same table, AAN: v_h = sigma^2 [1 + (h - 1){alpha^2 + alpha beta h + beta^2 h (2h - 1) / 6}]
  // with the error-correction beta (= alpha * component-form beta). From memory.
  it("Holt (AAN) closed form", () => {
    const alpha = 0.6
    const betaComponent = 0.25
    const b = alpha * betaComponent
    const v = additiveErrorVariance({ alpha, beta: betaComponent, gamma: 0, phi: 1, seasonLength: 1 }, 1, 12)
    v.forEach((x, i) => {
      const h = i + 1
      const expected = 1 + (h - 1) * (alpha ** 2 + alpha * b * h + (b ** 2 * h * (2 * h - 1)) / 6)
      expect(approxEqual(x, expected, 1e-12)).toBe(true)
    })
  })
  // Hand-derived for m = 4, h = 5: c_1..c_3 = alpha, c_4 = alpha + gamma, so
  // v_5 = 1 + 3 alpha^2 + (alpha + gamma)^2.
  it('seasonal step adds gamma once per full season', () => {
    const v = additiveErrorVariance({ alpha: 0.4, beta: 0, gamma: 0.2, phi: 1, seasonLength: 4 }, 1, 5)
    expect(approxEqual(v[4]!, 1 + 3 * 0.16 + 0.36, 1e-14)).toBe(true)
  })
})

// Source: statsmodels 0.13.5 ETSModel with fixed parameters: relative variances recovered from
// the width of its exact ("exact" method) 95% prediction intervals; made by
// scripts/fixtures/statsmodels_smoothing.py. ETSModel's smoothing_trend is the error-correction
// beta, so our component-form beta is that value / alpha.
// Tolerance 1e-9 relative: measured error about 1e-15, rounded up.
describe('additiveErrorVariance matches statsmodels ETSModel', () => {
  for (const c of smoothingFixture.variance) {
    it(`${c.model} relative variances, h = 1..${c.relativeVariance.length}`, () => {
      const shape = {
        alpha: c.alpha,
        beta: c.betaErrorCorrection / c.alpha,
        gamma: c.gamma,
        phi: c.phi ?? 1,
        seasonLength: c.seasonLength,
      }
      const v = additiveErrorVariance(shape, 1, c.relativeVariance.length)
      v.forEach((x, i) => expect(approxEqual(x, c.relativeVariance[i]!, 1e-9)).toBe(true))
    })
  }
})
