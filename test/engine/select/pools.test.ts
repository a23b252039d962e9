import { describe, expect, it } from 'vitest'
import { forecastSeries } from '../../../src/engine/index.js'
import { LISTABLE_MODELS, THOROUGH_EXTRA } from '../../../src/engine/select/pools.js'
import r from '../fixtures/r/decompose-airpassengers.json' with { type: 'json' }

// Which models each model search tries (service behaviour: no forecast numbers are judged).
// Series: datasets::AirPassengers, as stored beside the base R decompose reference.
const series = { demand: r.series, frequency: 'month' as const, horizon: 12 }
const tried = (result: ReturnType<typeof forecastSeries>) => result.candidates.map((c) => c.model)

describe('model searches', () => {
  it('fast leaves the thorough extras out; thorough tries them after the default pool', () => {
    const fast = tried(forecastSeries(series))
    const thorough = tried(forecastSeries({ ...series, modelSearch: 'thorough' }))
    for (const spec of THOROUGH_EXTRA) {
      expect(fast, spec.name).not.toContain(spec.name)
      expect(thorough, spec.name).toContain(spec.name)
    }
    expect(THOROUGH_EXTRA.map((s) => s.name)).toEqual(expect.arrayContaining(['state-space-smoothing', 'median-combination']))
  })

  it('auto-arima is only fitted when a request lists it', () => {
    expect(THOROUGH_EXTRA.map((s) => s.name)).not.toContain('auto-arima')
    expect(LISTABLE_MODELS.map((s) => s.name)).toContain('auto-arima')
  })

  it('a listed thorough model is fitted in the fast search too', () => {
    const result = forecastSeries({ ...series, models: ['state-space-smoothing', 'last-season'] })
    expect(tried(result).sort()).toEqual(['last-season', 'state-space-smoothing'])
    expect(result.candidates.find((c) => c.model === 'state-space-smoothing')?.reason ?? null).toBeNull()
  })
})
