import { describe, expect, it } from 'vitest'
import { forecastSeriesWith, type EngineModels } from '../../../src/engine/select/index.js'
import { orderByCriterion, parameterCount, shortlistCriteria } from '../../../src/engine/select/shortlist.js'
import { findModel } from '../../../src/engine/models.js'
import type { ModelSpec } from '../../../src/engine/types.js'
import { fakeConstant, fakeSpec } from './fakes.js'

const withFakes = (...registry: ModelSpec[]): EngineModels => ({ registry, classify: null, seasonalityTest: null })

describe('shortlistCriteria (AICc, Hurvich and Tsai 1989)', () => {
  it('computes N ln(SSE/N) + 2k + 2k(k+1)/(N-k-1) over the common fitted periods', () => {
    const values = [1, 2, 3, 4, 5, 6]
    // Fit a has no fitted value at t = 0, so N = 5 for both.
    const a = { fitted: [NaN, 2, 3, 4, 5, 7], complexity: 1 } // SSE 1, k 2
    const b = { fitted: [0, 1, 2, 3, 4, 5], complexity: 0 } // SSE over t >= 1: 5, k 1
    const [ca, cb] = shortlistCriteria(values, [a, b])!
    expect(ca).toBeCloseTo(5 * Math.log(1 / 5) + 4 + 12 / 2, 12)
    expect(cb).toBeCloseTo(5 * Math.log(5 / 5) + 2 + 4 / 3, 12)
  })

  it('is undefined when too few periods remain for the parameters', () => {
    expect(shortlistCriteria([1, 2, 3], [{ fitted: [1, 2, 3.5], complexity: 1 }])).toBeNull()
  })

  it('orders by criterion, keeps the given order on ties and when undefined', () => {
    const values = [3, 5, 4, 6, 5, 7, 6, 8]
    const close = { fitted: values.map((v) => v + 0.1), complexity: 2 }
    const far = { fitted: values.map((v) => v + 2), complexity: 0 }
    expect(orderByCriterion(values, [far, close])).toEqual([1, 0])
    expect(orderByCriterion(values, [close, close])).toEqual([0, 1])
    expect(orderByCriterion(values.slice(0, 3), [far, close])).toEqual([0, 1])
    // A perfect fit has criterion -Infinity and wins.
    expect(orderByCriterion(values, [close, { fitted: values, complexity: 3 }])).toEqual([1, 0])
  })

  it('charges seasonal models for their m - 1 seasonal terms', () => {
    expect(parameterCount(findModel('trend-smoothing-additive-season')!, {}, 12)).toBe(findModel('trend-smoothing-additive-season')!.complexity + 11)
    expect(parameterCount(findModel('theta')!, { seasonFactors: [1, 1, 1, 1] }, 4)).toBe(findModel('theta')!.complexity + 3)
    expect(parameterCount(findModel('trend-smoothing')!, { alpha: 0.5 }, 12)).toBe(findModel('trend-smoothing')!.complexity)
  })
})

describe('forecastSeries: the shortlist decides among the best holdout candidates', () => {
  // A noisy level around 100 whose last quarter happens to sit near 108.
  const history = [100, 96, 104, 99, 101, 97, 103, 100, 98, 102, 108, 107, 109, 108]
  const base = { demand: history, frequency: 'quarter' as const, horizon: 4, holdoutPeriods: 4 }

  it('prefers the in-sample fit when the holdout winner fits the past badly', () => {
    // 'trend-smoothing' forecasts 108 always: best on the holdout, poor in-sample. 'level-smoothing' forecasts the
    // running mean: second on the holdout, far better in-sample. AICc picks 'level-smoothing'.
    const lucky = fakeConstant('trend-smoothing', 108, 1)
    const mean = fakeSpec({ name: 'level-smoothing', complexity: 1, forecast: (s, h) => new Array(h).fill(s.reduce((a, b) => a + b, 0) / s.length) })
    const r = forecastSeriesWith(base, withFakes(lucky, mean))
    expect(r.candidates.map((e) => e.model)).toEqual(['level-smoothing', 'trend-smoothing'])
    expect(r.candidates[1]!.score!).toBeLessThan(r.candidates[0]!.score!)
    expect(r.model).toBe('level-smoothing')
  })

  it('considers only the best three by holdout score', () => {
    const mean = fakeSpec({ name: 'level-smoothing', complexity: 1, forecast: (s, h) => new Array(h).fill(s.reduce((a, b) => a + b, 0) / s.length) })
    const r = forecastSeriesWith(
      base,
      withFakes(mean, fakeConstant('trend-smoothing', 108, 1), fakeConstant('theta', 107, 1), fakeConstant('last-value', 109, 1)),
    )
    // ses is fourth on the holdoutPeriods: not refitted, so it cannot win on the criterion.
    expect(r.candidates[3]!.model).toBe('level-smoothing')
    expect(r.model).not.toBe('level-smoothing')
  })
})
