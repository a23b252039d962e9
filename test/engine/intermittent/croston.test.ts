import { describe, expect, it } from 'vitest'
import { approxEqual } from '../../../src/engine/numeric.js'
import { CROSTON_ALPHAS, fitCroston, intermittentModels } from '../../../src/engine/intermittent/index.js'
import { croston, sba } from '../../../src/engine/intermittent/croston.js'
import { expectEngineError, expectInputGuards, expectSane } from '../trend/spec-checks.js'

/** Mean squared one-step error after the first demand, computed independently. */
function mse(series: readonly number[], fitted: readonly number[]): number {
  let s = 0
  let k = 0
  for (let t = 0; t < series.length; t++) {
    if (Number.isNaN(fitted[t])) continue
    s += (series[t]! - fitted[t]!) ** 2
    k++
  }
  return s / k
}

// Invented intermittent series for the hand computations below.
const series = [0, 4, 0, 0, 6, 0, 2, 0]

describe('croston and sba', () => {
  for (const spec of [croston, sba]) {
    it(`${spec.name}: rejects bad input, negative values and fewer than 2 demands`, () => {
      expectInputGuards(spec, 1)
      expectEngineError(() => spec.fit([0, 3, -1, 2], { seasonLength: 1 }), 'negative-value')
      expectEngineError(() => spec.fit([0, 0, 0, 0], { seasonLength: 1 }), 'series-too-short', `${spec.name} needs 2 periods with demand, has 0`)
      expectEngineError(() => spec.fit([0, 5, 0, 0], { seasonLength: 1 }), 'series-too-short')
      expectEngineError(() => fitCroston(series, { variant: spec.name as 'croston' | 'croston-bias-corrected', alpha: 0 }), 'invalid-option')
    })
  }

  it('lists both models', () => {
    expect(intermittentModels.map((s) => s.name)).toEqual(['croston', 'croston-bias-corrected'])
  })

  // A demand every period: size = the constant, interval = 1 (Croston); SBA scales by (1 - alpha/2).
  it('forecasts a constant demand as itself (Croston) and deflated (SBA)', () => {
    const flat = new Array(10).fill(5)
    expect(expectSane(croston.fit(flat, { seasonLength: 1 }), 10)).toEqual(new Array(12).fill(5))
    const s = sba.fit(flat, { seasonLength: 1 })
    const alpha = s.params.levelWeight as number
    expectSane(s, 10).forEach((v) => expect(approxEqual(v, 5 * (1 - alpha / 2), 1e-14)).toBe(true))
  })

  // Hand computation, alpha = 0.1. First demand 4 at position 2 (1-based): size 4, interval 2.
  // Demand 6 after 3 periods: size 4 + 0.1 (6 - 4) = 4.2, interval 2 + 0.1 (3 - 2) = 2.1.
  // Demand 2 after 2 periods: size 4.2 + 0.1 (2 - 4.2) = 3.98, interval 2.1 + 0.1 (2 - 2.1) = 2.09.
  it('Croston (1972) updates size and interval only on demand', () => {
    const fit = fitCroston(series, { alpha: 0.1 })
    expect(fit.params.demandSize).toBeCloseTo(3.98, 14)
    expect(fit.params.demandInterval).toBeCloseTo(2.09, 14)
    expect(fit.fitted.slice(0, 2)).toEqual([NaN, NaN])
    fit.fitted.slice(2, 7).forEach((v) => expect(v).toBeCloseTo(2, 14)) // 4/2, then 4.2/2.1
    expect(fit.fitted[7]).toBeCloseTo(3.98 / 2.09, 14)
    expect(fit.forecast(3).every((v) => approxEqual(v, 3.98 / 2.09, 1e-14))).toBe(true)
  })

  // Syntetos and Boylan (2005): SBA = Croston * (1 - alpha/2).
  it('SBA deflates the Croston forecast by 1 - alpha/2', () => {
    const fit = fitCroston(series, { alpha: 0.1, variant: 'croston-bias-corrected' })
    expect(fit.model).toBe('croston-bias-corrected')
    expect(fit.params.biasFactor).toBe(0.95)
    expect(approxEqual(fit.forecast(1)[0]!, (0.95 * 3.98) / 2.09, 1e-14)).toBe(true)
    expect(approxEqual(fit.fitted[3]!, 0.95 * 2, 1e-14)).toBe(true)
  })

  it('chooses alpha from the grid by the smallest in-sample mean squared error', () => {
    const demand = [0, 0, 7, 0, 1, 0, 0, 0, 9, 0, 2, 0, 0, 12, 0, 0, 0, 3, 0, 5, 0, 0]
    for (const variant of ['croston', 'croston-bias-corrected'] as const) {
      const chosen = fitCroston(demand, { variant })
      expect(CROSTON_ALPHAS).toContain(chosen.params.levelWeight)
      const best = mse(demand, chosen.fitted)
      for (const alpha of CROSTON_ALPHAS) {
        expect(best).toBeLessThanOrEqual(mse(demand, fitCroston(demand, { variant, alpha }).fitted))
      }
    }
  })
})
