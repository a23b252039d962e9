import { describe, expect, it } from 'vitest'
import { toSeriesInput } from '../../src/runs/series-input.js'
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
      holdoutOrigins: 1,
    })
  })

  it('lets a series override frequency, firstPeriod and season length', () => {
    const input = toSeriesInput(settings, { sku: 'A', demand: [1], frequency: 'week', firstPeriod: '2024-W09', seasonLength: 4 })
    expect(input).toMatchObject({ frequency: 'week', firstPeriod: '2024-W09', seasonLength: 4, horizon: 6 })
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
