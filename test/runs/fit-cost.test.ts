import { describe, expect, it } from 'vitest'
import { MODEL_REGISTRY } from '../../src/engine/index.js'
import { requestFitCost, seriesFitCost } from '../../src/runs/fit-cost.js'
import { RunSettings } from '../../src/schemas/run.js'

const settings = (extra: object = {}) => RunSettings.parse({ horizon: 3, ...extra })

describe('fit cost: points x season length x holdout origins x candidates', () => {
  it('uses the frequency default season and the default pool of models when none are listed', () => {
    // Monthly: season 12 by default; one origin by default.
    expect(seriesFitCost(settings(), { sku: 'A', demand: [1, 2, 3, 4] })).toBe(4 * 12 * 1 * MODEL_REGISTRY.length)
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
})
