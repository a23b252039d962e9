import { describe, expect, it } from 'vitest'
import { convertedPeriods, toSeriesInput } from '../../src/runs/series-input.js'
import { RunSettings } from '../../src/schemas/run.js'

const settings = RunSettings.parse({ horizon: 6, frequency: 'month', seasonLength: 12, models: ['level-smoothing', 'trend-smoothing'] })

describe('toSeriesInput', () => {
  it('applies the run settings to a series', () => {
    expect(toSeriesInput(settings, { sku: 'A', demand: [1, null, 3] })).toEqual({
      demand: [1, null, 3],
      frequency: 'month',
      seasonLength: 12,
      horizon: 6,
      rankBy: 'mase',
      models: ['level-smoothing', 'trend-smoothing'],
      intervalLevels: [80, 95],
      missingPeriods: 'zero',
      allowNegativeDemand: false,
      keepLeadingZeros: false,
    })
    // Unset, the engine decides the origins per series (select/holdout.ts, defaultHoldoutOrigins); set, they pass through.
    expect(toSeriesInput(RunSettings.parse({ horizon: 6, frequency: 'year', holdoutOrigins: 2 }), { sku: 'A', demand: [1] }).holdoutOrigins).toBe(2)
  })

  it('lets a series override frequency, firstPeriod and season length', () => {
    const input = toSeriesInput(settings, { sku: 'A', demand: [1], frequency: 'week', firstPeriod: '2024-W09', seasonLength: 4 })
    // The run's horizon of 6 months is converted: 6 x 30.4375 / 7 = 26.09 weeks, rounded up to 27.
    expect(input).toMatchObject({ frequency: 'week', firstPeriod: '2024-W09', seasonLength: 4, horizon: 27 })
  })

  it('converts a run-level horizon and holdout for a series of another frequency through days (calendar rule)', () => {
    // Hand arithmetic with 365.25 / 12 = 30.4375 days a month, 91.3125 a quarter, 7 a week.
    const monthly = RunSettings.parse({ horizon: 12, holdoutPeriods: 3, frequency: 'month' })
    // 12 months = 365.25 days = 52.18 weeks -> 53 (at least the span asked for); 3 months = 13.04 weeks -> 13.
    expect(convertedPeriods(monthly, 'week')).toEqual({ horizon: 53, holdoutPeriods: 13 })
    // 12 months are exactly 4 quarters; 3 months exactly 1.
    expect(convertedPeriods(monthly, 'quarter')).toEqual({ horizon: 4, holdoutPeriods: 1 })
    // 12 months are 1 year; 3 months a quarter of a year: the holdout keeps at least 1 period.
    expect(convertedPeriods(monthly, 'year')).toEqual({ horizon: 1, holdoutPeriods: 1 })
    expect(convertedPeriods(monthly, 'month')).toEqual({ horizon: 12, holdoutPeriods: 3 })
    // Daily SKUs in a yearly run: capped at the most periods a request may ask for.
    expect(convertedPeriods(RunSettings.parse({ horizon: 3, frequency: 'year' }), 'day')).toEqual({ horizon: 1000 })
  })

  it('leaves unset options absent so the engine applies its defaults', () => {
    const input = toSeriesInput(RunSettings.parse({ horizon: 2 }), { sku: 'A', demand: [1] })
    expect(Object.keys(input)).not.toContain('seasonLength')
    expect(Object.keys(input)).not.toContain('holdoutPeriods')
    expect(Object.keys(input)).not.toContain('models')
    expect(Object.keys(input)).not.toContain('firstPeriod')
  })
})

describe('quantiles and modelSearch', () => {
  it('are carried to the engine when set', () => {
    const s = RunSettings.parse({ horizon: 2, quantiles: [0.5, 0.95], modelSearch: 'thorough' })
    expect(toSeriesInput(s, { sku: 'A', demand: [1, 2] })).toMatchObject({ quantiles: [0.5, 0.95], modelSearch: 'thorough' })
    const plain = toSeriesInput(RunSettings.parse({ horizon: 2 }), { sku: 'A', demand: [1, 2] })
    expect('quantiles' in plain || 'modelSearch' in plain).toBe(false)
  })

  it('are refused outside (0, 1), beyond 20 values, or for an unknown search, naming the field', () => {
    const bad = (body: object): string[] => {
      const r = RunSettings.safeParse({ horizon: 2, ...body })
      return r.success ? [] : r.error.issues.map((i) => i.path.join('.'))
    }
    expect(bad({ quantiles: [0.5, 1] })).toEqual(['quantiles.1'])
    expect(bad({ quantiles: Array.from({ length: 21 }, () => 0.5) })).toEqual(['quantiles'])
    expect(bad({ modelSearch: 'exhaustive' })).toEqual(['modelSearch'])
  })
})
