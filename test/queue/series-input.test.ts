import { describe, expect, it } from 'vitest'
import { toSeriesInput } from '../../src/queue/series-input.js'
import { RunSettings } from '../../src/schemas/run.js'

const settings = RunSettings.parse({ horizon: 6, frequency: 'month', seasonLength: 12, models: ['ses', 'holt'] })

describe('toSeriesInput', () => {
  it('applies the run settings to a series', () => {
    expect(toSeriesInput(settings, { sku: 'A', values: [1, null, 3] })).toEqual({
      values: [1, null, 3],
      frequency: 'month',
      seasonLength: 12,
      horizon: 6,
      metric: 'mase',
      models: ['ses', 'holt'],
      intervals: [80, 95],
      fillPolicy: 'zero',
      allowNegative: false,
      keepLeadingZeros: false,
      origins: 1,
    })
  })

  it('lets a series override frequency, start and season length', () => {
    const input = toSeriesInput(settings, { sku: 'A', values: [1], frequency: 'week', start: '2024-W09', seasonLength: 4 })
    expect(input).toMatchObject({ frequency: 'week', start: '2024-W09', seasonLength: 4, horizon: 6 })
  })

  it('leaves unset options absent so the engine applies its defaults', () => {
    const input = toSeriesInput(RunSettings.parse({ horizon: 2 }), { sku: 'A', values: [1] })
    expect(Object.keys(input)).not.toContain('seasonLength')
    expect(Object.keys(input)).not.toContain('holdout')
    expect(Object.keys(input)).not.toContain('models')
    expect(Object.keys(input)).not.toContain('start')
  })
})
