import { describe, expect, it } from 'vitest'
import { checkRunOptions, checkUniqueSkus, emptyScopeError, RunInputError } from '../../src/runs/input.js'

describe('run input checks', () => {
  it('refuse a second series for a SKU, naming the second occurrence', () => {
    const err = (() => {
      try {
        checkUniqueSkus([{ sku: 'GRD-1001' }, { sku: 'GRD-1002' }, { sku: 'GRD-1001' }])
      } catch (e) {
        return e
      }
    })()
    expect(err).toBeInstanceOf(RunInputError)
    expect(err).toMatchObject({ code: 'duplicate-sku', field: 'series[2].sku', message: 'SKU "GRD-1001" appears more than once' })
    expect(() => checkUniqueSkus([{ sku: 'a' }, { sku: 'A' }])).not.toThrow()
  })

  it('refuse a lead time plus review period beyond the horizon as an invalid option of replenishment', () => {
    const f = 'month' as const
    expect(() => checkRunOptions({ frequency: f, horizon: 3, replenishment: { leadTimePeriods: 4, serviceLevel: 0.95 } })).toThrow(RunInputError)
    expect(() => checkRunOptions({ frequency: f, horizon: 6, replenishment: { leadTimePeriods: 4, serviceLevel: 0.95 } })).not.toThrow()
    expect(() => checkRunOptions({ frequency: f, horizon: 6, replenishment: { leadTimePeriods: 4, reviewPeriods: 3 } })).toThrow(RunInputError)
    // 100 days = 3.29 months (365.25 / 12 days each): 4 periods needed.
    const days = (() => {
      try {
        checkRunOptions({ frequency: f, horizon: 3, replenishment: { leadTimeDays: 100, serviceLevel: 0.95 } })
      } catch (e) {
        return e
      }
    })()
    expect(days).toMatchObject({ code: 'invalid-option', field: 'replenishment.leadTimeDays' })
    // Without a lead time the SKUs' own policies may complete it: nothing to refuse yet.
    expect(() => checkRunOptions({ frequency: f, horizon: 1, replenishment: { serviceLevel: 0.95 } })).not.toThrow()
  })

  it('name the scope field that matched nothing', () => {
    expect(emptyScopeError({ skus: ['x'] }).field).toBe('scope.skus')
    expect(emptyScopeError({ tags: ['category:garden'] }).field).toBe('scope.tags')
    expect(emptyScopeError({ all: true })).toMatchObject({ code: 'empty-scope', field: 'scope.all' })
  })
})
