import { describe, expect, it } from 'vitest'
import { forecastSeries } from '../../src/engine/index.js'
import { forecastItem } from '../../src/runs/forecast-sku.js'
import { RunSettings } from '../../src/schemas/run.js'

/**
 * Run-level counts of periods in a mixed-frequency run (issue 13, "no silent settings"):
 * each item of another frequency than the run's says what was done with them.
 * Hand arithmetic with the calendar rule (30.4375 days a month; common practice).
 */

const weekly = Array.from({ length: 60 }, (_, i) => 40 + (i % 4))

describe('a weekly SKU in a monthly run', () => {
  it('gets the horizon converted (3 months = 13.04 weeks, rounded up to 14), with a warning naming both', () => {
    const item = forecastItem(forecastSeries, RunSettings.parse({ horizon: 3, frequency: 'month' }), { sku: 'GLOVE-9', demand: weekly, frequency: 'week' })
    if ('failure' in item) throw new Error(item.failure.message)
    expect(item.forecast).toHaveLength(14)
    expect(item.warnings).toContainEqual({
      code: 'period-setting-converted',
      message: expect.stringMatching(/^horizon 3 counts month periods .* it is 14 week periods, rounded up/),
    })
  })

  it('gets a run-level seasonLength not applied and holdoutPeriods converted, each with its warning', () => {
    const settings = RunSettings.parse({ horizon: 1, frequency: 'month', seasonLength: 12, holdoutPeriods: 2 })
    const item = forecastItem(forecastSeries, settings, { sku: 'GLOVE-9', demand: weekly, frequency: 'week' })
    if ('failure' in item) throw new Error(item.failure.message)
    // 2 months = 8.70 weeks, rounded to 9; 1 month = 4.35 weeks, rounded up to 5.
    expect(item.modelChoice.holdoutPeriods).toBe(9)
    expect(item.forecast).toHaveLength(5)
    const codes = item.warnings.map((w) => w.code)
    expect(codes.filter((c) => c === 'period-setting-converted')).toHaveLength(2)
    expect(codes).toContain('period-setting-not-applied')
  })

  it('a SKU of the run\'s own frequency keeps the settings as given, without these warnings', () => {
    const item = forecastItem(forecastSeries, RunSettings.parse({ horizon: 3, frequency: 'week' }), { sku: 'GLOVE-9', demand: weekly, frequency: 'week' })
    if ('failure' in item) throw new Error(item.failure.message)
    expect(item.forecast).toHaveLength(3)
    expect(item.warnings.map((w) => w.code)).not.toContain('period-setting-converted')
  })
})
