import { describe, expect, it } from 'vitest'
import { defaultHoldout, planHoldout } from '../../../src/engine/select/holdout.js'

describe('defaultHoldout (our rule: min(horizon, m), leaving the largest trainable requirement)', () => {
  it('is min(horizon, seasonLength) when the history is long', () => {
    expect(defaultHoldout(60, 18, 12, 1, [2, 3, 24])).toBe(12)
    expect(defaultHoldout(60, 6, 12, 1, [2, 3, 24])).toBe(6)
    expect(defaultHoldout(40, 8, 1, 1, [2, 3])).toBe(1)
  })

  it('shrinks so seasonal models keep two seasons of training', () => {
    // 30 months, seasonal models need 24: hold back 6.
    expect(defaultHoldout(30, 12, 12, 1, [2, 3, 24])).toBe(6)
    // With 3 origins the earliest training part is n - holdout - 2.
    expect(defaultHoldout(30, 12, 12, 3, [2, 3, 24])).toBe(4)
  })

  it('ignores requirements no holdout could meet, and never goes below 1', () => {
    // 20 months: seasonal models (24) cannot train at all, so they do not constrain the holdout.
    expect(defaultHoldout(20, 12, 12, 1, [2, 3, 24])).toBe(12)
    expect(defaultHoldout(4, 12, 12, 1, [2, 3, 24])).toBe(1)
  })
})

describe('planHoldout', () => {
  it('keeps a caller holdout that leaves at least 2 training points', () => {
    expect(planHoldout(10, 3, 1, 8, 1, [2])).toEqual({ holdout: 8, origins: 1, reduced: false })
  })

  it('reduces origins first, then the holdout, and says so', () => {
    expect(planHoldout(10, 3, 1, 6, 4, [2])).toEqual({ holdout: 6, origins: 3, reduced: true })
    expect(planHoldout(5, 3, 1, 6, 1, [2])).toEqual({ holdout: 3, origins: 1, reduced: true })
  })
})
