import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { detrend, hasSeasonality } from '../../../src/engine/select/seasonality.js'

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
