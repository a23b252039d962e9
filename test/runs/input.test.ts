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

  it('refuse a lead time beyond the horizon as an invalid option of replenishment', () => {
    expect(() => checkRunOptions({ horizon: 3, replenishment: { leadTimePeriods: 4, serviceLevel: 0.95 } })).toThrow(RunInputError)
    expect(() => checkRunOptions({ horizon: 6, replenishment: { leadTimePeriods: 4, serviceLevel: 0.95 } })).not.toThrow()
  })

  it('name the scope field that matched nothing', () => {
    expect(emptyScopeError({ skus: ['x'] }).field).toBe('scope.skus')
    expect(emptyScopeError({ tags: ['category:garden'] }).field).toBe('scope.tags')
    expect(emptyScopeError({ all: true })).toMatchObject({ code: 'empty-scope', field: 'scope.all' })
  })
})
