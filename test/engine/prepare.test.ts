import { describe, expect, it } from 'vitest'
import { EngineInputError } from '../../src/engine/errors.js'
import { fillMissing, prepareSeries } from '../../src/engine/prepare.js'
import type { SeriesInput } from '../../src/engine/types.js'

const base: SeriesInput = { demand: [3, 4, 5], frequency: 'month', horizon: 2 }

function errorOf(input: Partial<SeriesInput> & Record<string, unknown>): { code: string; field?: string } | null {
  try {
    prepareSeries({ ...base, ...input } as SeriesInput)
  } catch (err) {
    if (err instanceof EngineInputError) return { code: err.code, field: err.field }
    throw err
  }
  return null
}

describe('prepareSeries: validation', () => {
  it('rejects empty and all-missing series', () => {
    expect(errorOf({ demand: [] })).toEqual({ code: 'empty-series', field: 'demand' })
    expect(errorOf({ demand: [null, null] })).toEqual({ code: 'empty-series', field: 'demand' })
  })

  it('names the first non-finite value', () => {
    expect(errorOf({ demand: [1, NaN] })).toEqual({ code: 'non-finite-value', field: 'demand[1]' })
    expect(errorOf({ demand: [1, 2, Infinity] })).toEqual({ code: 'non-finite-value', field: 'demand[2]' })
    expect(errorOf({ demand: [-Infinity] })).toEqual({ code: 'non-finite-value', field: 'demand[0]' })
  })

  it('rejects negatives unless allowNegativeDemand', () => {
    expect(errorOf({ demand: [1, -2] })).toEqual({ code: 'negative-value', field: 'demand[1]' })
    expect(errorOf({ demand: [1, -2], allowNegativeDemand: true })).toBeNull()
  })

  it('rejects out-of-range options with the field name', () => {
    const cases: [Record<string, unknown>, string][] = [
      [{ horizon: 0 }, 'horizon'],
      [{ horizon: 1.5 }, 'horizon'],
      [{ horizon: 1001 }, 'horizon'],
      [{ holdoutPeriods: 0 }, 'holdoutPeriods'],
      [{ seasonLength: 0 }, 'seasonLength'],
      [{ seasonLength: 400 }, 'seasonLength'],
      [{ holdoutOrigins: 0 }, 'holdoutOrigins'],
      [{ holdoutOrigins: 13 }, 'holdoutOrigins'],
      [{ intervalLevels: [80, 100] }, 'intervalLevels[1]'],
      [{ intervalLevels: [0] }, 'intervalLevels[0]'],
      [{ intervalLevels: [NaN] }, 'intervalLevels[0]'],
      [{ rankBy: 'r2' }, 'rankBy'],
      [{ models: ['arima'] }, 'models[0]'],
      [{ models: [] }, 'models'],
      [{ frequency: 'hour' }, 'frequency'],
      [{ missingPeriods: 'mean' }, 'missingPeriods'],
    ]
    for (const [opt, field] of cases) expect(errorOf(opt), JSON.stringify(opt)).toEqual({ code: 'invalid-option', field })
  })

  it('rejects a firstPeriod that does not match the frequency', () => {
    expect(errorOf({ firstPeriod: '2024-Q1' })).toEqual({ code: 'invalid-period', field: 'firstPeriod' })
  })
})

describe('prepareSeries: missing periods', () => {
  it('fills with zero by default and reports the count', () => {
    const p = prepareSeries({ ...base, demand: [2, null, 4, null] })
    expect(p.values).toEqual([2, 0, 4, 0])
    expect(p.history.missing).toBe(2)
    expect(p.warnings.map((w) => w.code)).toContain('missing-filled')
  })

  it('interpolates linearly; edges take the nearest known value', () => {
    expect(fillMissing([null, 2, null, null, 8, null], 'interpolate')).toEqual([2, 2, 4, 6, 8, 8])
    const p = prepareSeries({ ...base, demand: [1, null, 3], missingPeriods: 'interpolate' })
    expect(p.values).toEqual([1, 2, 3])
  })
})

describe('prepareSeries: leading zeros', () => {
  it('trims zeros before the first sale and shifts the first period', () => {
    const p = prepareSeries({ ...base, demand: [0, 0, null, 5, 0, 6], firstPeriod: '2024-11' })
    expect(p.values).toEqual([5, 0, 6])
    expect(p.offset).toBe(3)
    expect(p.history).toEqual({ length: 6, used: 3, missing: 1, trimmedLeadingZeros: 3, firstPeriod: '2025-02' })
    expect(p.warnings.find((w) => w.code === 'leading-zeros-trimmed')?.message).toMatch(/^3 zero period/)
  })

  it('keeps them on request', () => {
    const p = prepareSeries({ ...base, demand: [0, 0, 5], keepLeadingZeros: true })
    expect(p.values).toEqual([0, 0, 5])
    expect(p.history.firstPeriod).toBe('1')
  })

  it('keeps an all-zero history whole and flags it', () => {
    const p = prepareSeries({ ...base, demand: [0, 0, 0] })
    expect(p.values).toEqual([0, 0, 0])
    expect(p.flat).toBe('all-zero')
  })
})

describe('prepareSeries: defaults', () => {
  it('fills in season length, rankBy, levels and holdoutOrigins', () => {
    const p = prepareSeries({ ...base, frequency: 'quarter', intervalLevels: [95, 80, 95] })
    expect(p.seasonLength).toBe(4)
    expect(p.rankBy).toBe('mase')
    expect(p.levels).toEqual([80, 95])
    expect(p.holdoutOrigins).toBe(1)
    expect(p.flat).toBeNull()
    expect(prepareSeries({ ...base, demand: [7, 7] }).flat).toBe('constant')
  })
})
