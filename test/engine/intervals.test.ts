import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { buildIntervals, normalQuantile } from '../../src/engine/intervals.js'
import { approxEqual } from '../../src/engine/numeric.js'

// Source: base R 4.2.2 stats::qnorm (make.R beside the JSON).
const qnorm = JSON.parse(readFileSync(new URL('./fixtures/r-front/front.json', import.meta.url), 'utf8')).qnorm as {
  p: number[]
  z: number[]
}

describe('normalQuantile', () => {
  it('handles the ends and bad input', () => {
    expect(normalQuantile(0)).toBe(-Infinity)
    expect(normalQuantile(1)).toBe(Infinity)
    expect(normalQuantile(0.5)).toBe(0)
    expect(normalQuantile(-0.1)).toBeNaN()
    expect(normalQuantile(1.1)).toBeNaN()
    expect(normalQuantile(NaN)).toBeNaN()
  })

  // Source: standard normal table values (10 significant digits), e.g. NIST/SEMATECH e-Handbook 1.3.6.7.1;
  // the digits here are from memory and confirmed by the R fixture below.
  it('matches the standard normal table', () => {
    expect(Math.abs(normalQuantile(0.975) - 1.959963985)).toBeLessThan(1e-9)
    expect(Math.abs(normalQuantile(0.9) - 1.281551566)).toBeLessThan(1e-9)
    expect(Math.abs(normalQuantile(0.95) - 1.644853627)).toBeLessThan(1e-9)
  })

  it('matches R qnorm to 1e-14 relative across the range', () => {
    // Tolerance: both evaluate AS 241; differences are rounding in the polynomial evaluation.
    expect(qnorm.p.length).toBeGreaterThan(20)
    qnorm.p.forEach((p, i) => {
      expect(approxEqual(normalQuantile(p), qnorm.z[i]!, 1e-14, 1e-15), `p=${p}`).toBe(true)
    })
  })

  it('is antisymmetric and increasing', () => {
    let prev = -Infinity
    for (let p = 0.001; p < 1; p += 0.001) {
      const z = normalQuantile(p)
      expect(z).toBeGreaterThan(prev)
      expect(Math.abs(z + normalQuantile(1 - p))).toBeLessThan(1e-12)
      prev = z
    }
  })
})

describe('buildIntervals', () => {
  it('uses analytical variances when given', () => {
    const b = buildIntervals({ point: [10, 10], levels: [95], variance: [4, 9], residuals: [], allowNegative: false })
    expect(b.method).toBe('analytical')
    expect(approxEqual(b.upper['95']![0]!, 10 + 1.959963984540054 * 2, 1e-15)).toBe(true)
    expect(approxEqual(b.lower['95']![1]!, 10 - 1.959963984540054 * 3, 1e-15)).toBe(true)
  })

  it('falls back to residuals with sigma_h = sigma_1 * sqrt(h)', () => {
    // residuals 3, -3, 3, -3: root mean square 3
    const b = buildIntervals({ point: [50, 50, 50, 50], levels: [80], residuals: [3, -3, 3, -3], allowNegative: false })
    expect(b.method).toBe('empirical')
    const z = normalQuantile(0.9)
    expect(approxEqual(b.upper['80']![3]! - 50, z * 3 * 2, 1e-14)).toBe(true)
    expect(approxEqual(b.upper['80']![0]! - 50, z * 3, 1e-14)).toBe(true)
  })

  it('ignores non-finite or negative variances', () => {
    const b = buildIntervals({ point: [5], levels: [80], variance: [NaN], residuals: [1, -1], allowNegative: false })
    expect(b.method).toBe('empirical')
  })

  it('has method none with fewer than 2 residuals or when asked', () => {
    expect(buildIntervals({ point: [5], levels: [80], residuals: [1], allowNegative: false }).method).toBe('none')
    const b = buildIntervals({ point: [5], levels: [80], residuals: [1, 2, 3], allowNegative: false, none: true })
    expect(b.method).toBe('none')
    expect(b.lower['80']![0]).toBe(5)
    expect(b.upper['80']![0]).toBe(5)
  })

  it('contains the point, widens with level, and clamps at zero for demand', () => {
    const b = buildIntervals({ point: [1, 2, 3], levels: [50, 80, 95], residuals: [2, -2, 1, -1], allowNegative: false })
    expect(b.clamped).toBe(true)
    for (let i = 0; i < 3; i++) {
      expect(b.lower['50']![i]).toBeGreaterThanOrEqual(b.lower['80']![i]!)
      expect(b.lower['80']![i]).toBeGreaterThanOrEqual(b.lower['95']![i]!)
      expect(b.upper['50']![i]).toBeLessThan(b.upper['80']![i]!)
      expect(b.upper['80']![i]).toBeLessThan(b.upper['95']![i]!)
      expect(b.lower['95']![i]).toBeGreaterThanOrEqual(0)
      expect(b.lower['50']![i]).toBeLessThanOrEqual([1, 2, 3][i]!)
    }
    const neg = buildIntervals({ point: [1], levels: [95], residuals: [2, -2], allowNegative: true })
    expect(neg.clamped).toBe(false)
    expect(neg.lower['95']![0]).toBeLessThan(0)
  })
})
