import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { chiSquareQuantile, detrend, hasSeasonality, kruskalWallis } from '../../../src/engine/select/seasonality.js'

// Source: R datasets::AirPassengers (Box, Jenkins & Reinsel series G), via fixtures/r-front.
const air = JSON.parse(readFileSync(new URL('../fixtures/r-front/front.json', import.meta.url), 'utf8')).airPassengers as {
  train: number[]
}

describe('detrend', () => {
  it('removes a straight line exactly and leaves zero-mean residuals', () => {
    expect(detrend([3, 5, 7, 9]).every((r) => Math.abs(r) < 1e-12)).toBe(true)
    const r = detrend([1, 4, 2, 8, 5])
    expect(Math.abs(r.reduce((a, b) => a + b, 0))).toBeLessThan(1e-12)
  })
})

describe('hasSeasonality', () => {
  it('finds the yearly cycle in 36 and 132 months of AirPassengers', () => {
    expect(hasSeasonality(air.train.slice(0, 36), 12)).toBe(true)
    expect(hasSeasonality(air.train, 12)).toBe(true)
  })

  it('finds none in a straight line, a constant, or with m < 2 or too few points', () => {
    const line = Array.from({ length: 120 }, (_, t) => 50 + 3 * t + ((t * 7) % 5) * 0.1)
    expect(hasSeasonality(line, 12)).toBe(false)
    expect(hasSeasonality(new Array(40).fill(3), 12)).toBe(false)
    expect(hasSeasonality(air.train, 1)).toBe(false)
    expect(hasSeasonality(air.train.slice(0, 12), 12)).toBe(false)
  })
})

describe('kruskalWallis', () => {
  // Source: base R 4.2.2, kruskal.test(x, factor(rep(0:3, 6)))$statistic = 1.4501763668430403
  // for the x below (ties present, so the tie correction is exercised).
  // Tolerance 1e-12 relative: rounding only.
  it('matches R kruskal.test with ties', () => {
    const x = [3, 1, 4, 1, 5, 9, 2, 6, 5, 3, 5, 8, 9, 7, 9, 3, 2, 3, 8, 4, 6, 2, 6, 4]
    expect(Math.abs(kruskalWallis(x, 4) / 1.4501763668430403 - 1)).toBeLessThan(1e-12)
  })

  it('is 0 when every value ties and large when the groups separate', () => {
    expect(kruskalWallis(new Array(12).fill(5), 4)).toBe(0)
    // Groups 0..3 hold ranks {1,2}, {3,4}, {5,6}, {7,8}: H = 12/(8*9) * sum(R^2/2) - 27 = 6.6667 (by hand).
    expect(Math.abs(kruskalWallis([1, 3, 5, 7, 2, 4, 6, 8], 4) - 20 / 3)).toBeLessThan(1e-12)
  })
})

describe('chiSquareQuantile (Wilson-Hilferty)', () => {
  // Source: base R 4.2.2 qchisq(0.9, c(3, 11, 51)). Tolerance 1% relative: the
  // approximation's error, measured 0.6% at 3 degrees of freedom and 0.1% at 11.
  it('is close to R qchisq at the 90% level', () => {
    const r = [
      [3, 6.2513886311703235],
      [11, 17.2750085175000727],
      [51, 64.2954003352158452],
    ]
    for (const [df, q] of r) expect(Math.abs(chiSquareQuantile(0.9, df!) / q! - 1)).toBeLessThan(0.01)
  })
})

describe('hasSeasonality below three seasons (rank test)', () => {
  it('finds the yearly cycle in 24 and 30 months of AirPassengers', () => {
    expect(hasSeasonality(air.train.slice(0, 24), 12)).toBe(true)
    expect(hasSeasonality(air.train.slice(0, 30), 12)).toBe(true)
  })

  it('finds none in a straight line or below two seasons', () => {
    const line = Array.from({ length: 30 }, (_, t) => 50 + 3 * t + ((t * 7) % 5) * 0.1)
    expect(hasSeasonality(line, 12)).toBe(false)
    expect(hasSeasonality(air.train.slice(0, 23), 12)).toBe(false)
  })
})
