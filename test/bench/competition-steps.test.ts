import { describe, expect, it } from 'vitest'
import { stepCoverage } from '../../bench/competition-steps.js'

describe('stepCoverage', () => {
  it('counts inclusive bounds per step, worked by hand', () => {
    // Two series, two steps. Step 1: both inside the 95% band, one on the 80% bound (counts).
    // Step 2: the first is outside both bands, the second inside only the 95% band.
    const band = (l80: number[], u80: number[], l95: number[], u95: number[]) => ({ point: [0, 0], lower80: l80, upper80: u80, lower95: l95, upper95: u95 })
    const s = stepCoverage('year', [
      { test: [1, 9], forecast: band([0, 0], [1, 1], [-1, -1], [2, 2]) },
      { test: [0, 3], forecast: band([-1, -1], [1, 1], [-5, -5], [5, 5]) },
    ])
    expect(s.series).toBe(2)
    expect(s.cov80).toEqual([1, 0])
    expect(s.cov95).toEqual([1, 0.5])
  })
})
