import { describe, expect, it } from 'vitest'
import { finalLevel, levels, levelSse, minimiseOnInterval } from '../../../src/engine/trend/level-smoothing.js'

describe('level smoothing kernel', () => {
  // Hand computation, alpha 0.5: levels 10, 11, 11, 12.5; one-step errors 2, 0, 3.
  it('follows the SES recursion with level[0] = x[0]', () => {
    const x = [10, 12, 11, 14]
    expect(levels(x, 0.5)).toEqual([10, 11, 11, 12.5])
    expect(finalLevel(x, 0.5)).toBe(12.5)
    expect(levelSse(x, 0.5)).toBe(4 + 0 + 9)
    // weights scale each error before squaring
    expect(levelSse(x, 0.5, [1, 2, 1, 0.5])).toBe(16 + 0 + 2.25)
  })

  it('alpha = 1 is the naive forecast', () => {
    expect(levelSse([1, 4, 2], 1)).toBe(9 + 4)
  })
})

describe('minimiseOnInterval', () => {
  it('finds an interior minimum to the tolerance', () => {
    expect(Math.abs(minimiseOnInterval((x) => (x - 0.3) ** 2, 0, 1) - 0.3)).toBeLessThan(1e-7)
  })

  it('returns a boundary minimum exactly and prefers the smaller x on a flat function', () => {
    expect(minimiseOnInterval((x) => -x, 0.0001, 1)).toBe(1)
    expect(minimiseOnInterval((x) => x, 0.0001, 1)).toBe(0.0001)
    expect(minimiseOnInterval(() => 5, 0.0001, 1)).toBe(0.0001)
  })

  // The coarse grid keeps the search off a shallower local minimum near the start.
  it('finds the deeper of two minima', () => {
    const f = (x: number): number => Math.min((x - 0.1) ** 2 + 0.01, (x - 0.8) ** 2)
    expect(Math.abs(minimiseOnInterval(f, 0, 1) - 0.8)).toBeLessThan(1e-7)
  })
})
