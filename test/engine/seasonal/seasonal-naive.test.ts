import { describe, expect, it } from 'vitest'
import { fitSeasonalNaive, seasonalModels } from '../../../src/engine/seasonal/index.js'
import { seasonalNaive } from '../../../src/engine/seasonal/seasonal-naive.js'
import { expectEngineError, expectInputGuards, expectSane } from '../trend/spec-checks.js'

describe('last-season', () => {
  it('rejects bad input and a season length below 2', () => {
    expectInputGuards(seasonalNaive, 4)
    expectEngineError(() => fitSeasonalNaive([1, 2, 3, 4], 1), 'invalid-option')
    expect(seasonalModels.map((s) => s.name)).toEqual(['last-season', 'level-smoothing-season-averages', 'linear-trend-season-averages', 'linear-trend-season-ratios'])
  })

  it('forecasts constant and all-zero series as themselves', () => {
    expect(expectSane(fitSeasonalNaive(new Array(8).fill(3), 4), 8)).toEqual(new Array(12).fill(3))
    expect(expectSane(fitSeasonalNaive(new Array(8).fill(0), 4), 8)).toEqual(new Array(12).fill(0))
  })

  // Hand computation. Variance (floor((h-1)/m) + 1) sigma^2: Hyndman and Athanasopoulos,
  // FPP 3rd ed. 5.5 (from memory).
  it('repeats the last season; variance steps up each season', () => {
    const fit = fitSeasonalNaive([1, 2, 3, 4, 2, 2, 4, 6], 4)
    expect(fit.fitted).toEqual([NaN, NaN, NaN, NaN, 1, 2, 3, 4])
    expect(fit.forecast(6)).toEqual([2, 2, 4, 6, 2, 2])
    // residuals 1, 0, 1, 2: sigma^2 = 6 / 4 = 1.5
    expect(fit.forecastVariance!(5)).toEqual([1.5, 1.5, 1.5, 1.5, 3])
  })
})
