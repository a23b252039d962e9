import { describe, expect, it } from 'vitest'
import { LISTABLE_MODELS, MODEL_REGISTRY, THOROUGH_EXTRA } from '../../src/engine/index.js'
import { MODEL_COST_WEIGHTS, modelCostWeight, requestFitCost, seriesFitCost } from '../../src/runs/fit-cost.js'
import { RunSettings } from '../../src/schemas/run.js'

const settings = (extra: object = {}) => RunSettings.parse({ horizon: 3, ...extra })

describe('fit cost: points x season length x holdout origins x candidates', () => {
  it('uses the frequency default season and the default pool of models when none are listed', () => {
    // Monthly: season 12 by default; one origin by default.
    expect(seriesFitCost(settings(), { sku: 'A', demand: [1, 2, 3, 4] })).toBe(4 * 12 * 1 * MODEL_REGISTRY.length)
    // Yearly (no season): as many origins as the horizon has periods (engine/select/holdout.ts).
    expect(seriesFitCost(settings({ frequency: 'year' }), { sku: 'A', demand: [1, 2, 3, 4, 5] })).toBe(5 * 1 * 3 * MODEL_REGISTRY.length)
    expect(seriesFitCost(settings({ frequency: 'year', holdoutOrigins: 1 }), { sku: 'A', demand: [1, 2, 3, 4, 5] })).toBe(5 * MODEL_REGISTRY.length)
  })

  it('takes the series settings over the run settings', () => {
    const s = settings({ seasonLength: 4, holdoutOrigins: 3, models: ['last-value', 'croston'] })
    expect(seriesFitCost(s, { sku: 'A', demand: [1, 2, 3, 4, 5] })).toBe(5 * 4 * 3 * 2)
    expect(seriesFitCost(s, { sku: 'A', demand: [1, 2, 3, 4, 5], seasonLength: 7 })).toBe(5 * 7 * 3 * 2)
    expect(seriesFitCost(s, { sku: 'A', demand: [1], frequency: 'week', seasonLength: 52 })).toBe(52 * 3 * 2)
  })

  it('sums over the series of a request', () => {
    const s = settings({ models: ['last-value'] })
    expect(requestFitCost(s, [{ sku: 'A', demand: [1, 2] }, { sku: 'B', demand: [1] }])).toBe(2 * 12 + 12)
  })

  it('weighs the costlier models: the thorough search adds its extra models and at least 3 origins', () => {
    // Weights from bench/model-cost.ts (bench/RESULTS.md, "Fit cost per model"); the default pool counts 1 each.
    const extra = THOROUGH_EXTRA.reduce((s, m) => s + modelCostWeight(m.name), 0)
    expect(extra).toBe(10 + 10 + 500 + 900)
    const thorough = settings({ modelSearch: 'thorough' })
    expect(seriesFitCost(thorough, { sku: 'A', demand: [1, 2, 3, 4] })).toBe(4 * 12 * 3 * (MODEL_REGISTRY.length + extra))
    expect(seriesFitCost(settings({ modelSearch: 'thorough', holdoutOrigins: 5 }), { sku: 'A', demand: [1] })).toBe(12 * 5 * (MODEL_REGISTRY.length + extra))
    // A listed model costs its weight in either search; auto-arima is listable only.
    expect(seriesFitCost(settings({ models: ['auto-arima', 'last-value'] }), { sku: 'A', demand: [1, 2] })).toBe(2 * 12 * (10_000 + 1))
  })

  it('names only models a request may list', () => {
    const listable = new Set<string>(LISTABLE_MODELS.map((m) => m.name))
    expect(Object.keys(MODEL_COST_WEIGHTS).filter((m) => !listable.has(m))).toEqual([])
  })
})
