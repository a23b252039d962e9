import { describe, expect, it } from 'vitest'
import { fitMovingAverage } from '../../../src/engine/trend/index.js'
import { movingAverage } from '../../../src/engine/trend/moving-average.js'
import { expectEngineError, expectInputGuards, expectSane } from './spec-checks.js'

describe('moving-average', () => {
  it('rejects empty, non-finite and too-short input', () => {
    expectInputGuards(movingAverage, 1)
    expectEngineError(() => fitMovingAverage([1, 2, 3]), 'series-too-short', 'moving-average needs 4 periods, has 3')
    expectEngineError(() => fitMovingAverage([1, 2, 3, 4], 5), 'invalid-option')
  })

  it('forecasts a constant and an all-zero series flat', () => {
    expect(expectSane(fitMovingAverage([8, 8, 8, 8, 8]), 5)).toEqual(new Array(12).fill(8))
    expect(expectSane(fitMovingAverage([0, 0, 0, 0]), 4)).toEqual(new Array(12).fill(0))
  })

  // Hand computation: a repeating 10, 14, 6 pattern. Windows 3, 6 and 9 average
  // whole cycles (fitted 10, errors 0, 4, -4: MSE 32/3); window 2 has errors -6, 0, 6
  // (MSE 24), window 4 errors 4, -5, 1 (MSE 14). Ties go to the shorter window.
  it('chooses the window with the smallest one-step error', () => {
    const series = [10, 14, 6, 10, 14, 6, 10, 14, 6, 10, 14, 6, 10, 14, 6, 10, 14, 6]
    const fit = fitMovingAverage(series)
    expect(fit.params.window).toBe(3)
    expect(fit.forecast(2)).toEqual([10, 10])
    expect(fit.fitted.slice(0, 4)).toEqual([NaN, NaN, NaN, 10])
    // Variance: the one-step errors 0, 4, -4 (five times each, t = 3..17) have mean square 32/3,
    // the same at every step (mean method, Hyndman and Athanasopoulos, FPP 3rd ed. 5.5, from memory).
    expect(fit.forecastVariance!(3).map((v) => +v.toFixed(12))).toEqual(new Array(3).fill(+(32 / 3).toFixed(12)))
  })

  it('has no variance with fewer than two one-step errors', () => {
    expect(fitMovingAverage([1, 2, 3, 4], 3).forecastVariance).toBeUndefined()
    expect(fitMovingAverage([1, 2, 3, 4, 6], 3).forecastVariance!(2)).toEqual([6.5, 6.5]) // errors 4 - 2 and 6 - 3: (4 + 9) / 2
  })

  it('follows a level shift with the shortest window', () => {
    const series = [0, 0, 0, 0, 0, 0, 10, 10, 10, 10, 10, 10, 10, 10, 10, 10]
    const fit = fitMovingAverage(series)
    expect(fit.params.window).toBe(2)
    expect(fit.forecast(1)).toEqual([10])
  })

  it('uses a fixed window when given: mean of the last k values', () => {
    const fit = fitMovingAverage([1, 2, 3, 4, 5, 6], 4)
    expect(fit.forecast(1)).toEqual([(3 + 4 + 5 + 6) / 4])
    expect(fit.fitted[4]).toBe((1 + 2 + 3 + 4) / 4)
  })
})
