import { describe, expect, it } from 'vitest'
import { fitNaive, trendModels } from '../../../src/engine/trend/index.js'
import { naive } from '../../../src/engine/trend/naive.js'
import { expectInputGuards, expectSane } from './spec-checks.js'

describe('last-value', () => {
  it('rejects empty and non-finite input', () => {
    expectInputGuards(naive, 1)
  })

  it('is listed in trendModels with complexity 0', () => {
    expect(trendModels.map((s) => s.name)).toEqual(['last-value', 'moving-average', 'linear-trend', 'theta', 'last-value-drift'])
    expect(naive.complexity).toBe(0)
  })

  it('handles a single point, constant and all-zero series', () => {
    const one = fitNaive([7])
    expect(one.forecast(3)).toEqual([7, 7, 7])
    expect(one.fitted).toEqual([NaN])
    expect(one.forecastVariance).toBeUndefined() // no residual to estimate it from
    expect(expectSane(fitNaive([5, 5, 5, 5]), 4)).toEqual(new Array(12).fill(5))
    expect(expectSane(fitNaive([0, 0, 0]), 3)).toEqual(new Array(12).fill(0))
  })

  // Hand computation. Variance h * sigma^2: Hyndman and Athanasopoulos, FPP 3rd ed. 5.5 (from memory).
  it('carries the last value forward; variance grows linearly in h', () => {
    const fit = fitNaive([3, 5, 4])
    expect(fit.fitted).toEqual([NaN, 3, 5])
    expect(fit.forecast(2)).toEqual([4, 4])
    // residuals 2 and -1: sigma^2 = (4 + 1) / 2 = 2.5
    expect(fit.forecastVariance!(3)).toEqual([2.5, 5, 7.5])
  })
})
