import { describe, expect, it } from 'vitest'
import { rankEvaluations } from '../../../src/engine/select/rank.js'
import type { Evaluation } from '../../../src/engine/select/evaluate.js'
import type { MetricSet, ModelName } from '../../../src/engine/types.js'
import { fakeSpec } from './fakes.js'

const flat = (s: readonly number[], h: number) => Array.from({ length: h }, () => s[s.length - 1] ?? 0)
const specs = (['last-value', 'level-smoothing', 'trend-smoothing'] as const).map((name, i) => fakeSpec({ name, complexity: i + 1, forecast: flat }))

const metrics = (mae: number | null, mase: number | null): MetricSet => ({ mae, rmse: mae, mape: null, smape: mae, mase, wape: mae }) as MetricSet
const scored = (model: ModelName, m: MetricSet): Evaluation => ({ entry: { model, family: 'level', status: 'scored', holdoutErrors: m }, metrics: m })

describe('rankEvaluations', () => {
  it('orders by the requested metric, lower first (hand-checkable)', () => {
    const r = rankEvaluations(specs, [scored('last-value', metrics(3, 1.5)), scored('level-smoothing', metrics(2, 1)), scored('trend-smoothing', metrics(4, 2))], 'mase')
    expect(r.fellBack).toBe(false)
    expect(r.order).toEqual([1, 0, 2])
    expect(r.candidates.map((e) => [e.model, e.score])).toEqual([['level-smoothing', 1], ['last-value', 1.5], ['trend-smoothing', 2]])
  })

  it('falls back to MAE when the requested metric is undefined for some candidate', () => {
    const r = rankEvaluations(specs, [scored('last-value', metrics(3, null)), scored('level-smoothing', metrics(2, 1)), scored('trend-smoothing', metrics(4, 2))], 'mase')
    expect(r.fellBack).toBe(true)
    expect(r.metric).toBe('mae')
    expect(r.candidates.map((e) => [e.model, e.score])).toEqual([['level-smoothing', 2], ['last-value', 3], ['trend-smoothing', 4]])
  })

  it('makes a candidate whose fallback metric is missing a failed entry with a reason, never an Infinity score', () => {
    const r = rankEvaluations(specs, [scored('last-value', metrics(null, null)), scored('level-smoothing', metrics(2, 1)), scored('trend-smoothing', metrics(4, 2))], 'mase')
    expect(r.metric).toBe('mae')
    expect(r.order).toEqual([1, 2])
    expect(r.candidates.map((e) => [e.model, e.status])).toEqual([['level-smoothing', 'scored'], ['trend-smoothing', 'scored'], ['last-value', 'failed']])
    const failed = r.candidates[2]!
    expect(failed.score).toBeUndefined()
    expect(failed.reason).toMatch(/mae is undefined/)
    for (const e of r.candidates) if (e.score !== undefined) expect(Number.isFinite(e.score)).toBe(true)
  })

  it('leaves nothing to rank when every candidate lacks the metric (the caller reports no model)', () => {
    const r = rankEvaluations(specs.slice(0, 1), [scored('last-value', metrics(null, null))], 'mae')
    expect(r.order).toEqual([])
    expect(r.candidates).toEqual([expect.objectContaining({ model: 'last-value', status: 'failed', reason: expect.any(String) })])
  })
})
