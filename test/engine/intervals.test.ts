import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { buildIntervals, conformalQuantile, normalQuantile, studentQuantile } from '../../src/engine/intervals.js'
import { approxEqual } from '../../src/engine/numeric.js'
import { createRandom, normalDraw } from '../../scripts/seeded-random.js'

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

describe('studentQuantile', () => {
  // Source: R 4.x, print(qt(c(0.975, 0.975, 0.9, 0.975, 0.995, 0.6, 0.975, 0.9), c(4, 10, 3, 3, 5, 7, 30, 1)), digits = 10).
  const r = [
    [0.975, 4, 2.7764451052], [0.975, 10, 2.228138852], [0.9, 3, 1.6377443537], [0.975, 3, 3.1824463053],
    [0.995, 5, 4.0321429836], [0.6, 7, 0.2631668614], [0.975, 30, 2.0422724563], [0.9, 1, 3.0776835372],
  ] as const
  it('matches R qt: exact for 1 df, within 1.5e-3 relative from 3 df on', () => {
    // Tolerance: the Cornish-Fisher expansion's measured error (largest at 3 df), rounded up.
    for (const [p, df, t] of r) expect(approxEqual(studentQuantile(p, df), t, df === 1 ? 1e-9 : 1.5e-3), `p=${p} df=${df}`).toBe(true)
  })
  it('is the normal quantile from 200 df and NaN without degrees of freedom', () => {
    expect(studentQuantile(0.975, 500)).toBe(normalQuantile(0.975))
    expect(studentQuantile(0.975, 0)).toBeNaN()
  })
})

describe('conformalQuantile', () => {
  it('takes the ceil((N + 1) p)-th smallest score, null when N is too small', () => {
    const scores = [1, 2, 3, 4, 5, 6, 7, 8, 9]
    expect(conformalQuantile(scores, 0.8)).toBe(8) // ceil(10 * 0.8) = 8
    expect(conformalQuantile(scores, 0.5)).toBe(5)
    expect(conformalQuantile(scores, 0.95)).toBeNull() // ceil(9.5) = 10 > 9
  })
})

describe('calibrated intervals', () => {
  const sd1 = { point: [100, 100], levels: [80, 95], variance: [1, 1], residuals: [], allowNegative: false }
  it('widen to the weighted conformal quantile of |error| / sd when the origins erred more than the model claims', () => {
    // 20 errors at step 1 of sizes 1..20 against sd 1: the 80% quantile is the 17th
    // smallest (cumulative weight 17/20 >= 0.8 * (1 + 1/20) = 0.84), 17.
    const calibration = Array.from({ length: 20 }, (_, i) => ({ step: 1, error: (i % 2 === 0 ? 1 : -1) * (i + 1) }))
    const b = buildIntervals({ ...sd1, levels: [80, 95, 99], calibration })
    expect(b.method).toBe('calibrated')
    expect(b.upper['80']![0]).toBe(117)
    expect(b.lower['80']![1]).toBe(83)
    // 95%: weight 0.95 * 1.05 = 0.9975 is reached by the largest score, 20.
    expect(b.upper['95']![0]).toBe(120)
    // 99%: 0.99 * 1.05 > 1, no score reaches it: the RMS of the scores times the t quantile
    // with 20 degrees of freedom, one per origin (every error here is a step-1 error).
    // Source: scipy 1.10.1 (Debian python3-scipy), scipy.stats.t.ppf(0.995, 20) = 2.845339709776814.
    // Tolerance 1e-5 relative: the Cornish-Fisher expansion's measured error at 20 df (1e-6), rounded up.
    const rms = Math.sqrt(Array.from({ length: 20 }, (_, i) => (i + 1) ** 2).reduce((a, b) => a + b, 0) / 20)
    expect(approxEqual(b.upper['99']![0]! - 100, rms * 2.845339709776814, 1e-5)).toBe(true)
  })
  it('use the predictive t quantile with one degree of freedom per origin when the origins are too few for the level', () => {
    // Three origins with sd 1 at both steps: step-1 errors 2, -1, 2 (one per origin), step-2
    // errors -2, 1 (the two origins that reached step 2). Worked by hand: weights 1/3 at step 1,
    // 1/2 at step 2, total 2; s^2 = ((4 + 1 + 4) / 3 + (4 + 1) / 2) / 2 = 2.75.
    // 95%: the weighted conformal rank needs 0.95 * (2 + 1/2) = 2.375 > 2: none. k = s * t_3(0.975),
    // scipy 1.10.1 scipy.stats.t.ppf(0.975, 3) * sqrt(2.75) = 5.2774901550403674 (Hahn & Meeker
    // 1991's prediction interval for a new observation, from memory), above the largest score 2.
    // Tolerance 1.5e-3 relative: the Cornish-Fisher expansion's measured error at 3 df (1.2e-3).
    const calibration = [
      { step: 1, error: 2 }, { step: 1, error: -1 }, { step: 2, error: -2 }, { step: 1, error: 2 }, { step: 2, error: 1 },
    ]
    const b = buildIntervals({ ...sd1, levels: [80, 95], calibration })
    expect(b.method).toBe('calibrated')
    for (const i of [0, 1]) {
      expect(approxEqual(b.upper['95']![i]! - 100, 5.2774901550403674, 1.5e-3)).toBe(true)
      expect(approxEqual(100 - b.lower['95']![i]!, 5.2774901550403674, 1.5e-3)).toBe(true)
    }
    // 80%: cumulative weights of the sorted scores 1, 1, 2, 2, 2 are 1/3, 5/6, 7/6, 3/2, 2; the
    // target 0.8 * 2.5 = 2 is reached by the last: the conformal quantile 2 stands.
    expect(b.upper['80']![0]).toBe(102)
  })
  it('keep the model spread with a single origin, and calibrate from two', () => {
    const one = buildIntervals({ ...sd1, calibration: [{ step: 1, error: 9 }, { step: 2, error: 9 }] })
    expect(one.method).toBe('analytical')
    expect(approxEqual(one.upper['95']![0]! - 100, normalQuantile(0.975), 1e-15)).toBe(true)
    // Two origins, errors 3 and -3 at step 1: s = 3, t_2(0.975) = 4.302652729911275 (scipy 1.10.1
    // scipy.stats.t.ppf(0.975, 2); the closed form for 2 df, sqrt(2 * 0.95^2 / (1 - 0.95^2)),
    // gives 4.302652729749464, 4e-11 from scipy's numerical inversion), so the bound is 100 + 12.908.
    // Tolerance 1e-10 relative: that gap, rounded up.
    const two = buildIntervals({ ...sd1, calibration: [{ step: 1, error: 3 }, { step: 1, error: -3 }] })
    expect(two.method).toBe('calibrated')
    expect(approxEqual(two.upper['95']![0]! - 100, 3 * 4.302652729911275, 1e-10)).toBe(true)
  })
  it('cover a new error at the promised rate when the standardised errors are normal (seeded simulation)', () => {
    // If the scores are N(0, c^2), a new score over s is Student t with nu = origins degrees of
    // freedom, so the 95% bound holds 95% whatever c (the t law of a normal ratio; Hahn & Meeker
    // 1991, from memory). 20,000 trials of 4 origins at one step, c = 10 (so the model spread
    // never binds): the share covered is 0.95 within 0.006 (about 4 binomial standard errors).
    const random = createRandom(20261205)
    const trials = 20000
    let covered = 0
    for (let k = 0; k < trials; k++) {
      const calibration = Array.from({ length: 4 }, () => ({ step: 1, error: 10 * normalDraw(random) }))
      const b = buildIntervals({ point: [0], levels: [95], variance: [1], residuals: [], allowNegative: true, calibration })
      const next = 10 * normalDraw(random)
      if (next >= b.lower['95']![0]! && next <= b.upper['95']![0]!) covered++
    }
    expect(Math.abs(covered / trials - 0.95)).toBeLessThan(0.006)
  })
  it('are never narrower than the largest standardised error when too few errors exist for the level', () => {
    // 19 errors of 1 and one of 10 at step 1 against sd 1. 99%: no score reaches 0.99 * 1.05; the RMS
    // times z is sqrt(119 / 20) * 2.5758 = 6.28, below the largest error seen, 10: the bound is 10.
    const calibration = [...Array.from({ length: 19 }, () => ({ step: 1, error: 1 })), { step: 1, error: -10 }]
    const b = buildIntervals({ ...sd1, levels: [99], calibration })
    expect(Math.sqrt(119 / 20) * normalQuantile(0.995)).toBeLessThan(10)
    expect(b.upper['99']![0]).toBe(110)
    expect(b.lower['99']![0]).toBe(90)
  })
  it('never narrow below the model spread', () => {
    const calibration = Array.from({ length: 20 }, () => ({ step: 1, error: 0.01 }))
    const b = buildIntervals({ ...sd1, calibration })
    expect(approxEqual(b.upper['95']![0]! - 100, normalQuantile(0.975), 1e-15)).toBe(true)
  })
  it('give quantiles on the bounds of the matching central interval', () => {
    const b = buildIntervals({ ...sd1, levels: [80, 95], quantiles: [0.025, 0.1, 0.5, 0.9, 0.975] })
    expect(b.quantiles['0.5']).toEqual([100, 100])
    expect(b.quantiles['0.975']).toEqual(b.upper['95'])
    expect(b.quantiles['0.025']).toEqual(b.lower['95'])
    expect(b.quantiles['0.9']).toEqual(b.upper['80'])
  })
})
