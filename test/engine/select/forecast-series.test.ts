import { high, low } from '../points.js'
import { describe, expect, it } from 'vitest'
import { EngineInputError } from '../../../src/engine/errors.js'
import { computeMetrics, intervalMetrics } from '../../../src/engine/metrics.js'
import { approxEqual } from '../../../src/engine/numeric.js'
import { forecastSeriesWith, type EngineModels } from '../../../src/engine/select/index.js'
import type { FitContext, ModelSpec, SeriesInput } from '../../../src/engine/types.js'
import { fakeBroken, fakeConstant, fakeLast, fakeMean, fakeRefusing, fakeSpec } from './fakes.js'

const withFakes = (...registry: ModelSpec[]): EngineModels => ({ registry, classify: null, seasonalityTest: null })
const history = [10, 12, 11, 13, 12, 14, 13, 15, 14, 16, 15, 17]
const series: SeriesInput = {
  demand: history,
  frequency: 'quarter',
  firstPeriod: '2021-Q1',
  horizon: 4,
}

describe('forecastSeries with test doubles: flat histories', () => {
  it('forecasts a constant history flat, without selection', () => {
    const r = forecastSeriesWith({ ...series, demand: [7, 7, 7] }, withFakes(fakeBroken('level-smoothing')))
    expect(r.model).toBe('last-value')
    expect(r.modelChoice).toEqual({ method: 'none', rankBy: 'mase', holdoutPeriods: 0, holdoutOrigins: 0 })
    expect(r.forecast.map((p) => p.demand)).toEqual([7, 7, 7, 7])
    expect(r.forecast[0]).toEqual({ period: '2021-Q4', demand: 7, intervals: [{ level: 80, low: 7, high: 7 }, { level: 95, low: 7, high: 7 }] })
    expect(r.intervalMethod).toBe('none')
    expect(r.candidates).toEqual([])
    // Three quarters: too short to trust and shorter than two seasons, besides constant.
    expect(r.warnings.map((w) => w.code)).toEqual(['short-history', 'fewer-than-two-seasons', 'constant-series'])
    expect(r.fitted).toEqual([null, 7, 7])
  })

  it('forecasts zero for an all-zero history', () => {
    const r = forecastSeriesWith({ ...series, demand: [0, null, 0] }, withFakes(fakeMean()))
    expect(r.forecast.every((p) => p.demand === 0 && low(p, 95) === 0 && high(p, 95) === 0)).toBe(true)
    expect(r.warnings.map((w) => w.code)).toEqual(['missing-filled', 'short-history', 'fewer-than-two-seasons', 'all-zero-series'])
  })
})

describe('forecastSeries with test doubles: the candidates', () => {
  it('scores, skips and fails candidates with reasons', () => {
    const models = withFakes(
      fakeMean('level-smoothing'),
      fakeLast('last-value'),
      fakeSpec({ name: 'last-season', seasonal: true, minLength: (m) => 2 * m, forecast: (s, h) => new Array(h).fill(s[0]) }),
      fakeSpec({ name: 'trend-smoothing-multiplicative-season', requiresPositive: true, forecast: (s, h) => new Array(h).fill(1) }),
      fakeSpec({ name: 'trend-smoothing-additive-season', seasonal: true, minLength: () => 20, forecast: (s, h) => new Array(h).fill(1) }),
      fakeBroken('theta'),
      fakeRefusing('trend-smoothing'),
    )
    const r = forecastSeriesWith({ ...series, demand: [0, ...history], keepLeadingZeros: true, seasonLength: 4 }, models)
    const byName = Object.fromEntries(r.candidates.map((e) => [e.model, e]))
    expect(byName['trend-smoothing-multiplicative-season']).toMatchObject({ status: 'skipped', reason: 'needs demand above zero in every period' })
    expect(byName['trend-smoothing-additive-season']).toMatchObject({ status: 'skipped' })
    expect(byName['trend-smoothing-additive-season']!.reason).toBe('needs 20 periods in the training part, has 9')
    expect(byName['theta']).toMatchObject({ status: 'failed', reason: 'boom' })
    expect(byName['trend-smoothing']).toMatchObject({ status: 'skipped', reason: 'cannot fit this' })
    expect(byName['last-season']!.status).toBe('scored')
    // Scored entries come first, best first, each with every metric.
    const scored = r.candidates.filter((e) => e.status === 'scored')
    expect(r.candidates.slice(0, scored.length)).toEqual(scored)
    for (let i = 1; i < scored.length; i++) expect(scored[i]!.score!).toBeGreaterThanOrEqual(scored[i - 1]!.score!)
    // Every point measure on every row; the interval measures on the chosen model's row
    // (on every row with modelSearch thorough: they need each model's residuals).
    const all = ['mae', 'mape', 'mase', 'msis', 'pinball', 'rmse', 'smape', 'wape']
    for (const e of scored) {
      expect(Object.keys(e.holdoutErrors!).sort()).toEqual(e.model === r.model ? all : all.filter((k) => k !== 'msis' && k !== 'pinball'))
    }
    expect(r.model).toBe(scored[0]!.model)
    const thorough = forecastSeriesWith({ ...series, modelSearch: 'thorough' }, models)
    for (const e of thorough.candidates.filter((c) => c.status === 'scored')) expect(Object.keys(e.holdoutErrors!).sort()).toEqual(all)
  })

  it('says a seasonal model needs a season length of at least 2', () => {
    const models = withFakes(fakeMean('level-smoothing'), fakeSpec({ name: 'level-smoothing-season-averages', seasonal: true, forecast: (s, h) => new Array(h).fill(1) }))
    const r = forecastSeriesWith({ ...series, seasonLength: 1 }, models)
    expect(r.candidates.find((e) => e.model === 'level-smoothing-season-averages')?.reason).toBe('needs a season length of at least 2')
  })

  it('picks the lowest score and breaks ties by complexity', () => {
    // Both forecast 14 -> identical scores; the simpler one wins whatever the order.
    const a = fakeConstant('trend-smoothing', 14, 4)
    const b = fakeConstant('linear-trend', 14, 2)
    expect(forecastSeriesWith(series, withFakes(a, b)).model).toBe('linear-trend')
    expect(forecastSeriesWith(series, withFakes(b, a)).model).toBe('linear-trend')
    // A strictly better score beats lower complexity. (The shortlist's AICc is undefined
    // here, 11 fitted periods for theta's 9 + 1 parameters, so the holdout order stands.)
    const c = fakeConstant('theta', 16, 9)
    expect(forecastSeriesWith(series, withFakes(a, b, c)).model).toBe('theta')
  })

  it('scores on the holdout with the metric asked for', () => {
    const r = forecastSeriesWith({ ...series, holdoutPeriods: 3, rankBy: 'rmse' }, withFakes(fakeMean('level-smoothing')))
    const v = history
    const train = v.slice(0, 9)
    const expected = computeMetrics(v.slice(9), new Array(3).fill(train.reduce((a, b) => a + b) / 9), train, 4)
    expect(r.modelChoice).toEqual({ method: 'holdout', rankBy: 'rmse', holdoutPeriods: 3, holdoutOrigins: 1 })
    expect(r.holdoutErrors).toMatchObject(expected)
    expect(r.candidates[0]!.score).toBe(expected.rmse)
    // The fake has no variance: its spread is the RMS of its one-step residuals times sqrt(h)
    // (intervals.modelSpread), and the interval measures use it.
    const residuals = train.slice(1).map((y, t) => y - train.slice(0, t + 1).reduce((a, b) => a + b) / (t + 1))
    const sigma = Math.sqrt(residuals.reduce((a, e) => a + e * e, 0) / residuals.length)
    const own = intervalMetrics(v.slice(9), new Array(3).fill(train.reduce((a, b) => a + b) / 9), [1, 2, 3].map((h) => sigma * Math.sqrt(h)), train, 4)
    expect(r.holdoutErrors!.msis).toBeCloseTo(own.msis!, 12)
    expect(r.holdoutErrors!.pinball).toBeCloseTo(own.pinball!, 12)
  })

  it('averages metrics over rolling origins ending at n - holdout - k', () => {
    const v = history
    const r = forecastSeriesWith({ ...series, holdoutPeriods: 2, holdoutOrigins: 3 }, withFakes(fakeLast('last-value')))
    const sets = [0, 1, 2].map((k) => {
      const end = v.length - 2 - k
      return computeMetrics(v.slice(end, end + 2), [v[end - 1]!, v[end - 1]!], v.slice(0, end), 4)
    })
    expect(approxEqual(r.holdoutErrors!.mae!, (sets[0]!.mae! + sets[1]!.mae! + sets[2]!.mae!) / 3, 1e-14)).toBe(true)
    expect(r.modelChoice.holdoutOrigins).toBe(3)
  })

  it('refits the winner on the full history starting from the training parameters', () => {
    const calls: { length: number; ctx: FitContext }[] = []
    const spy = fakeSpec({
      name: 'level-smoothing',
      forecast: (s, h) => new Array(h).fill(s[s.length - 1]),
      onFit: (s, ctx) => calls.push({ length: s.length, ctx }),
      params: (s) => ({ trainedOn: s.length }),
    })
    const r = forecastSeriesWith({ ...series, holdoutPeriods: 4 }, withFakes(spy))
    // Holdout fit on 8, refit on 12, then the calibration origins (select/calibrate.ts):
    // offsets 1 .. horizon + 2 = 6 (leaving the 6 training points an origin needs), five
    // of them evenly spread: 1, 2, 4, 5, 6.
    expect(calls.map((c) => c.length)).toEqual([8, 12, 11, 10, 8, 7, 6])
    expect(calls[1]!.ctx.initialParams).toEqual({ trainedOn: 8 })
    expect(calls[2]!.ctx.initialParams).toEqual({ trainedOn: 12 })
    expect(r.params).toEqual({ trainedOn: 12 })
  })

  it('falls back to the mae ranking when the chosen metric is undefined', () => {
    // In-sample differences at lag 4 and 1 are zero in the training part: MASE has no scale.
    const v = [5, 5, 5, 5, 5, 5, 9, 9]
    const r = forecastSeriesWith({ ...series, demand: v, holdoutPeriods: 2 }, withFakes(fakeLast('last-value'), fakeMean('level-smoothing')))
    expect(r.modelChoice.rankBy).toBe('mae')
    expect(r.warnings.map((w) => w.code)).toContain('rank-by-undefined')
  })

  it('ranks in-sample when no model beyond last-value can be trained on a holdout', () => {
    const long = fakeSpec({ name: 'trend-smoothing', minLength: () => 3, forecast: (s, h) => new Array(h).fill(s[s.length - 1]! + 1) })
    const r = forecastSeriesWith({ ...series, demand: [4, 6, 5] }, withFakes(fakeLast('last-value'), long))
    expect(r.modelChoice.method).toBe('in-sample')
    expect(r.modelChoice.holdoutPeriods).toBe(0)
    expect(r.warnings.map((w) => w.code)).toContain('ranked-in-sample')
    expect(r.candidates.every((e) => e.status === 'scored')).toBe(true)
  })

  it('throws series-too-short when no candidate can be fitted at all', () => {
    const needy = fakeSpec({ name: 'trend-smoothing-additive-season', minLength: () => 50, forecast: (s, h) => new Array(h).fill(1) })
    try {
      forecastSeriesWith(series, withFakes(needy))
      expect.unreachable()
    } catch (err) {
      expect(err).toBeInstanceOf(EngineInputError)
      expect((err as EngineInputError).code).toBe('series-too-short')
      expect((err as EngineInputError).message).toBe('trend-smoothing-additive-season needs 50 periods, has 12')
    }
  })

  it('throws invalid-option on models when every listed model is unfit for other reasons', () => {
    const seasonal = fakeSpec({ name: 'level-smoothing-season-averages', seasonal: true, forecast: (s, h) => new Array(h).fill(1) })
    try {
      forecastSeriesWith({ ...series, seasonLength: 1, models: ['level-smoothing-season-averages'] }, withFakes(seasonal))
      expect.unreachable()
    } catch (err) {
      expect(err).toBeInstanceOf(EngineInputError)
      expect((err as EngineInputError).code).toBe('invalid-option')
      expect((err as EngineInputError).field).toBe('models')
      expect((err as EngineInputError).message).toMatch(/level-smoothing-season-averages needs a season length of at least 2/)
    }
  })
})

describe('forecastSeries with test doubles: output', () => {
  it('labels forecasts after the trimmed history and reports it', () => {
    const r = forecastSeriesWith({ ...series, demand: [0, 0, ...history] }, withFakes(fakeLast()))
    expect(r.history).toEqual({ length: 14, used: 12, missing: 0, trimmedLeadingZeros: 2, firstPeriod: '2021-Q3' })
    expect(r.forecast.map((p) => p.period)).toEqual(['2024-Q3', '2024-Q4', '2025-Q1', '2025-Q2'])
  })

  it('raises negative forecasts and lower bounds to zero unless negatives are allowed', () => {
    const down = fakeSpec({ name: 'linear-trend', forecast: (s, h) => Array.from({ length: h }, (_, i) => s[s.length - 1]! - 8 * (i + 1)) })
    const r = forecastSeriesWith({ ...series, demand: [40, 32, 24, 16, 8], horizon: 3, holdoutPeriods: 1 }, withFakes(down))
    expect(r.forecast.map((p) => p.demand)).toEqual([0, 0, 0])
    // The residuals are all zero (a linear series), but five points are a short history:
    // the intervals take the last-value method's spread as a floor, and reach below zero.
    expect(r.warnings.map((w) => w.code)).toContain('intervals-raised-to-zero')
    expect(r.warnings.map((w) => w.code)).toContain('forecast-raised-to-zero')
    expect(r.forecast.every((p) => low(p, 95) === 0 && high(p, 95) > 0)).toBe(true)
    const free = forecastSeriesWith({ ...series, demand: [40, 32, 24, 16, 8], horizon: 3, holdoutPeriods: 1, allowNegativeDemand: true }, withFakes(down))
    expect(free.forecast.map((p) => p.demand)).toEqual([0, -8, -16])
  })

  it('uses analytical variances when the winner has them', () => {
    const withVar = fakeSpec({ name: 'level-smoothing', forecast: (s, h) => new Array(h).fill(100), variance: (h) => new Array(h).fill(4) })
    const r = forecastSeriesWith({ ...series, demand: [100, 102, 98, 101, 99, 100] }, withFakes(withVar))
    expect(r.intervalMethod).toBe('analytical')
    // Six points: short history, so the Student t quantile with 5 residuals - 1 parameter
    // = 4 degrees of freedom (R: qt(0.975, 4) = 2.776445) and the last-value spread as a
    // floor: one-step differences 2, -4, 3, -2, 1, RMS sqrt(34/5) > 2.
    const floor = Math.sqrt(34 / 5)
    // Tolerance 5e-4 relative: the t quantile's Cornish-Fisher expansion at 4 df (intervals.test.ts).
    expect(approxEqual((high(r.forecast[0]!, 95) - 100) / floor, 2.776445, 5e-4)).toBe(true)
    const long = forecastSeriesWith({ ...series, demand: [100, 102, 98, 101, 99, 100, 101, 99, 100, 102, 98, 100] }, withFakes(withVar))
    // Twelve points: calibrated on rolling origins; their errors (at most 2 = one sd) are
    // inside the model's spread, so calibration does not widen: t quantile, 10 df (R: qt(0.975, 10) = 2.228139).
    expect(long.intervalMethod).toBe('calibrated')
    expect(approxEqual((high(long.forecast[0]!, 95) - 100) / 2, 2.228139, 1e-5)).toBe(true)
  })

  it('floors a trend winner at the random walk spread on histories without a season, not with one', () => {
    // An exact line 10, 12, ..., 32 and a trend-family double that continues it, claiming sd 1.
    // Rolling-origin errors are 0, so calibration does not widen. Yearly (no season): the floor
    // is the last-value method's spread sigma sqrt(h), sigma = RMS of the one-step differences
    // (all 2) = 2: the random walk's h-step standard deviation (Hyndman & Athanasopoulos,
    // Forecasting: principles and practice, benchmark methods, from memory). The half-width is
    // the t quantile with 11 residuals - 1 parameter = 10 df (R: qt(0.975, 10) = 2.228139) times
    // 2 sqrt(h). Quarterly (season 4), 12 points: no floor, so 2.228139 times the model's sd 1.
    const line = Array.from({ length: 12 }, (_, t) => 10 + 2 * t)
    const trend = fakeSpec({
      name: 'linear-trend',
      family: 'trend',
      forecast: (s, h) => Array.from({ length: h }, (_, i) => s[s.length - 1]! + 2 * (i + 1)),
      variance: (h) => new Array(h).fill(1),
    })
    const yearly = forecastSeriesWith({ demand: line, frequency: 'year', firstPeriod: '2010', horizon: 4 }, withFakes(trend))
    expect(yearly.forecast.map((p) => p.demand)).toEqual([34, 36, 38, 40])
    // Tolerance 1e-5 relative: the t quantile's Cornish-Fisher expansion at 10 df (intervals.test.ts).
    yearly.forecast.forEach((p, i) => {
      expect(approxEqual(high(p, 95) - p.demand, 2.228139 * 2 * Math.sqrt(i + 1), 1e-5)).toBe(true)
    })
    const quarterly = forecastSeriesWith({ ...series, demand: line, horizon: 4 }, withFakes(trend))
    quarterly.forecast.forEach((p) => expect(approxEqual(high(p, 95) - p.demand, 2.228139, 1e-5)).toBe(true))
  })

  it('summarises residuals and reports fitted values with null where undefined', () => {
    const r = forecastSeriesWith({ ...series, demand: [1, 3, 2, 4] }, withFakes(fakeLast()))
    expect(r.fitted).toEqual([null, 1, 3, 2])
    // residuals 2, -1, 2: mean 1, sample sd sqrt(3), mae 5/3
    expect(r.residuals.count).toBe(3)
    expect(r.residuals.mean).toBe(1)
    expect(approxEqual(r.residuals.sd, Math.sqrt(3), 1e-15)).toBe(true)
    expect(approxEqual(r.residuals.mae, 5 / 3, 1e-15)).toBe(true)
  })
})

describe('modelSearch', () => {
  it('thorough: three rolling origins by default, the extra pool, and interval measures on every row', () => {
    const extra = fakeConstant('theta', 14, 2)
    const models: EngineModels = { ...withFakes(fakeMean('level-smoothing')), thoroughExtra: [extra] }
    const fast = forecastSeriesWith(series, models)
    expect(fast.modelChoice.holdoutOrigins).toBe(1)
    expect(fast.candidates.map((c) => c.model)).toEqual(['level-smoothing'])
    const thorough = forecastSeriesWith({ ...series, modelSearch: 'thorough' }, models)
    expect(thorough.modelChoice.holdoutOrigins).toBe(3)
    expect(thorough.candidates.map((c) => c.model).sort()).toEqual(['level-smoothing', 'theta'])
    for (const c of thorough.candidates) expect(c.holdoutErrors!.msis).not.toBeUndefined()
    // Three is a minimum: a request may set more, not fewer.
    expect(forecastSeriesWith({ ...series, modelSearch: 'thorough', holdoutOrigins: 1 }, models).modelChoice.holdoutOrigins).toBe(3)
    expect(forecastSeriesWith({ ...series, modelSearch: 'thorough', holdoutOrigins: 4 }, models).modelChoice.holdoutOrigins).toBe(4)
  })

  it('refuses an unknown search', () => {
    expect(() => forecastSeriesWith({ ...series, modelSearch: 'exhaustive' as never }, withFakes(fakeMean()))).toThrow(/modelSearch must be one of fast, thorough/)
  })
})

describe('modelSearch on a short history', () => {
  it('cuts the thorough minimum of origins to fit without warning, but warns when a requested count is cut', () => {
    const short = { ...series, demand: [4, 6, 5, 7] }
    const r = forecastSeriesWith({ ...short, modelSearch: 'thorough' }, withFakes(fakeMean()))
    expect(r.warnings.map((w) => w.code)).not.toContain('holdout-reduced')
    const asked = forecastSeriesWith({ ...short, holdoutOrigins: 3 }, withFakes(fakeMean()))
    expect(asked.warnings.map((w) => w.code)).toContain('holdout-reduced')
  })
})
