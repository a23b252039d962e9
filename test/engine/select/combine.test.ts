/**
 * The shortlist's mean as a candidate (src/engine/select/combine.ts), with test doubles
 * whose forecasts are constants, so every expected value is worked by hand here. The
 * members are the real models' own checks' business (statsmodels and R references beside
 * each model's tests); what is checked here is the mechanics: the mean, its holdout score,
 * when it replaces the AICc pick, the pick's bands re-centred, and who may be combined.
 */
import { describe, expect, it } from 'vitest'
import { EngineInputError } from '../../../src/engine/errors.js'
import { forecastSeriesWith, type EngineModels } from '../../../src/engine/select/index.js'
import type { ForecastResult, ModelSpec, SeriesInput } from '../../../src/engine/types.js'
import { fakeConstant, fakeSpec } from './fakes.js'

const engine = (combineShortlist: boolean, ...registry: ModelSpec[]): EngineModels => ({
  registry,
  classify: null,
  seasonalityTest: null,
  combineShortlist,
})

// A level near 100 whose last year sits near 108 (invented for the mechanics).
const history = [100, 96, 104, 99, 101, 97, 103, 100, 98, 102, 108, 107, 109, 108]
const base: SeriesInput = { demand: history, frequency: 'quarter', horizon: 4, holdoutPeriods: 4, seasonLength: 1, holdoutOrigins: 1 }

/** MASE of a constant forecast c on the last 4 points, scaled by the training part's one-step naive MAE (m = 1). */
function maseOfConstant(c: number): number {
  const train = history.slice(0, 10)
  const test = history.slice(10)
  let scale = 0
  for (let t = 1; t < train.length; t++) scale += Math.abs(train[t]! - train[t - 1]!)
  scale /= train.length - 1
  return test.reduce((s, y) => s + Math.abs(y - c), 0) / test.length / scale
}

const width = (r: ForecastResult, step: number, level: number): number => {
  const band = r.forecast[step]!.intervals.find((i) => i.level === level)!
  return band.high - band.low
}

describe('the shortlist mean as a candidate', () => {
  // 104 and 112 miss the holdout (mean 108) by 4 on average each; their mean, 108, by 0.5.
  const low = fakeConstant('level-smoothing', 104, 1)
  const high = fakeConstant('trend-smoothing', 112, 1)

  it('replaces the pick when its holdout score is no worse, and says what it averaged', () => {
    const r = forecastSeriesWith(base, engine(true, low, high))
    expect(r.model).toBe('shortlist-combination')
    expect(r.family).toBe('combination')
    expect(r.params).toEqual({ memberCount: 2 })
    // The AICc pick first: 104 is nearer the history than 112.
    expect(r.modelChoice.members).toEqual([
      { model: 'level-smoothing', family: 'level' },
      { model: 'trend-smoothing', family: 'level' },
    ])
    for (const p of r.forecast) expect(p.demand).toBeCloseTo(108, 12)
    expect(r.candidates.map((c) => c.model)).toEqual(['shortlist-combination', 'level-smoothing', 'trend-smoothing'])
    expect(r.candidates[0]!.score).toBeCloseTo(maseOfConstant(108), 12)
    expect(r.holdoutErrors!.mase).toBeCloseTo(maseOfConstant(108), 12)
    expect(r.holdoutErrors!.mae).toBeCloseTo(0.5, 12)
    expect(r.candidates[1]!.score).toBeCloseTo(maseOfConstant(104), 12)
    // In-sample fitted values: the members' mean, 108, wherever both have one.
    expect(r.fitted.slice(1).every((f) => f !== null && Math.abs(f - 108) < 1e-9)).toBe(true)
  })

  it("keeps the pick's calibrated bands, centred on the mean", () => {
    const combined = forecastSeriesWith(base, engine(true, low, high))
    const pick = forecastSeriesWith(base, engine(false, low, high))
    expect(pick.model).toBe('level-smoothing')
    expect(combined.intervalMethod).toBe(pick.intervalMethod)
    for (let h = 0; h < 4; h++) {
      for (const level of [80, 95]) expect(width(combined, h, level)).toBeCloseTo(width(pick, h, level), 9)
      const band = combined.forecast[h]!.intervals.find((i) => i.level === 95)!
      expect((band.low + band.high) / 2).toBeCloseTo(108, 9)
    }
    expect(combined.stepSd).toEqual(pick.stepSd)
  })

  it('stays a candidate row, after the shortlist, when the pick scores better', () => {
    // 108 hits the holdout (MAE 0.5); the mean of 108 and 120, 114, misses it by 6.
    const r = forecastSeriesWith(base, engine(true, fakeConstant('level-smoothing', 108, 1), fakeConstant('trend-smoothing', 120, 1)))
    expect(r.model).toBe('level-smoothing')
    expect(r.modelChoice.members).toBeUndefined()
    expect(r.candidates.map((c) => c.model)).toEqual(['level-smoothing', 'trend-smoothing', 'shortlist-combination'])
    expect(r.candidates[2]!.status).toBe('scored')
    expect(r.candidates[2]!.score).toBeCloseTo(maseOfConstant(114), 12)
  })

  it('does not average a seasonal pick with models without a season', () => {
    const seasonal = fakeSpec({ name: 'level-smoothing-additive-season', seasonal: true, family: 'seasonal', forecast: (_s, h) => new Array(h).fill(104) })
    const r = forecastSeriesWith({ ...base, seasonLength: 2 }, engine(true, seasonal, high))
    expect(r.model).toBe('level-smoothing-additive-season')
    expect(r.candidates.map((c) => c.model)).not.toContain('shortlist-combination')
  })

  it('is not formed from listed models unless listed itself; listed with one other model it is refused', () => {
    const models = engine(true, low, high)
    const listed = forecastSeriesWith({ ...base, models: ['level-smoothing', 'trend-smoothing'] }, models)
    expect(listed.candidates.map((c) => c.model)).not.toContain('shortlist-combination')
    const asked = forecastSeriesWith({ ...base, models: ['level-smoothing', 'trend-smoothing', 'shortlist-combination'] }, models)
    expect(asked.model).toBe('shortlist-combination')
    let error: unknown
    try {
      forecastSeriesWith({ ...base, models: ['shortlist-combination', 'level-smoothing'] }, models)
    } catch (err) {
      error = err
    }
    expect(error).toBeInstanceOf(EngineInputError)
    expect((error as EngineInputError).field).toBe('models')
  })

  it('is not offered when the engine is built without it', () => {
    const r = forecastSeriesWith(base, engine(false, low, high))
    expect(r.candidates.map((c) => c.model)).toEqual(['level-smoothing', 'trend-smoothing'])
  })
})
