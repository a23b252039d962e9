import { describe, expect, it } from 'vitest'
import { forecastSeries } from '../../../src/engine/index.js'
import { defaultHoldout, defaultHoldoutOrigins, planHoldout } from '../../../src/engine/select/holdout.js'
import lm from '../fixtures/r/lm-trend.json' with { type: 'json' }
import air from '../fixtures/r/decompose-airpassengers.json' with { type: 'json' }

describe('defaultHoldout (our rule: min(horizon, m), leaving the largest trainable requirement)', () => {
  it('is min(horizon, seasonLength) when the history is long', () => {
    expect(defaultHoldout(60, 18, 12, 1, [2, 3, 24])).toBe(12)
    expect(defaultHoldout(60, 6, 12, 1, [2, 3, 24])).toBe(6)
    expect(defaultHoldout(40, 8, 1, 1, [2, 3])).toBe(1)
  })

  it('shrinks so seasonal models keep two seasons of training', () => {
    // 30 months, seasonal models need 24: hold back 6.
    expect(defaultHoldout(30, 12, 12, 1, [2, 3, 24])).toBe(6)
    // With 3 origins the earliest training part is n - holdout - 2.
    expect(defaultHoldout(30, 12, 12, 3, [2, 3, 24])).toBe(4)
  })

  it('ignores requirements no holdout could meet, and never goes below 1', () => {
    // 20 months: seasonal models (24) cannot train at all, so they do not constrain the holdout.
    expect(defaultHoldout(20, 12, 12, 1, [2, 3, 24])).toBe(12)
    expect(defaultHoldout(4, 12, 12, 1, [2, 3, 24])).toBe(1)
  })
})

describe('planHoldout', () => {
  it('keeps a caller holdout that leaves at least 2 training points', () => {
    expect(planHoldout(10, 3, 1, 8, 1, [2])).toEqual({ holdout: 8, origins: 1, reduced: false })
  })

  it('reduces origins first, then the holdout, and says so', () => {
    expect(planHoldout(10, 3, 1, 6, 4, [2])).toEqual({ holdout: 6, origins: 3, reduced: true })
    expect(planHoldout(5, 3, 1, 6, 1, [2])).toEqual({ holdout: 3, origins: 1, reduced: true })
  })
})

describe('defaultHoldoutOrigins (our rule, decided on the M3 training split: bench/RESULTS.md)', () => {
  it('is the horizon, at most the cap, without a season, and 1 with one', () => {
    expect(defaultHoldoutOrigins(1, 6, 12)).toBe(6)
    expect(defaultHoldoutOrigins(1, 20, 12)).toBe(12)
    expect(defaultHoldoutOrigins(1, 1, 12)).toBe(1)
    expect(defaultHoldoutOrigins(4, 8, 12)).toBe(1)
    expect(defaultHoldoutOrigins(12, 18, 12)).toBe(1)
  })

  it('applies when a request sets no origins; a set count stands; a short history gets fewer, without a warning', () => {
    // Public data: Nile (R datasets, yearly) and AirPassengers (monthly), from the R fixtures.
    const demand = lm.Nile.series
    const chosen = (extra: object) => {
      const r = forecastSeries({ demand, frequency: 'year', horizon: 4, ...extra })
      if ('failure' in r) throw new Error('expected a forecast')
      return r
    }
    const byDefault = chosen({})
    expect(byDefault.modelChoice).toMatchObject({ method: 'holdout', holdoutPeriods: 1, holdoutOrigins: 4 })
    expect(chosen({ holdoutOrigins: 1 }).modelChoice.holdoutOrigins).toBe(1)
    const short = forecastSeries({ demand: demand.slice(0, 5), frequency: 'year', horizon: 4 })
    if ('failure' in short) throw new Error('expected a forecast')
    expect(short.modelChoice.holdoutOrigins).toBeLessThan(4)
    expect(short.warnings.map((w) => w.code)).not.toContain('holdout-reduced')
    const monthly = forecastSeries({ demand: air.series, frequency: 'month', horizon: 6 })
    if ('failure' in monthly) throw new Error('expected a forecast')
    expect(monthly.modelChoice.holdoutOrigins).toBe(1)
  })
})
