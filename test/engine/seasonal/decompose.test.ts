import { describe, expect, it } from 'vitest'
import { approxEqual } from '../../../src/engine/numeric.js'
import { decomposeClassical, seasonalPositionFactors } from '../../../src/engine/seasonal/index.js'
import r from '../fixtures/r/decompose-airpassengers.json' with { type: 'json' }
import { expectEngineError } from '../trend/spec-checks.js'

/** Compare with an R vector where null is R's NA (our NaN). */
const closeR = (a: readonly number[], b: readonly (number | null)[], tol: number, absTol = 0): void => {
  expect(a).toHaveLength(b.length)
  a.forEach((v, i) => {
    const ref = b[i]!
    if (ref === null) expect(v, `index ${i}`).toBeNaN()
    else expect(approxEqual(v, ref, tol, absTol), `index ${i}: ${v} vs ${ref}`).toBe(true)
  })
}

describe('decomposeClassical', () => {
  it('rejects a season length below 2, short, non-finite and (multiplicative) non-positive input', () => {
    expectEngineError(() => decomposeClassical([1, 2, 3, 4], 1, 'additive'), 'invalid-option')
    expectEngineError(() => decomposeClassical([], 4, 'additive'), 'empty-series')
    expectEngineError(() => decomposeClassical([1, 2, 3, 4, 5, 6, 7], 4, 'additive'), 'series-too-short', 'classical decomposition needs 8 periods, has 7')
    expectEngineError(() => decomposeClassical([1, 2, 3, NaN, 5, 6, 7, 8], 4, 'additive'), 'non-finite-value')
    expectEngineError(() => decomposeClassical([1, 2, -3, 4, 5, 6, 7, 8], 4, 'multiplicative'), 'not-positive')
    expectEngineError(() => decomposeClassical(new Array(12).fill(0), 4, 'multiplicative'), 'not-positive')
    // a season position that is always zero would give a factor of zero
    expectEngineError(() => decomposeClassical([0, 5, 6, 7, 0, 5, 6, 7, 0, 5, 6, 7], 4, 'multiplicative'), 'not-positive')
  })

  it('gives factors of 1 (multiplicative) and 0 (additive) on a constant series', () => {
    const mult = decomposeClassical(new Array(12).fill(5), 4, 'multiplicative')
    expect(mult.figure).toEqual([1, 1, 1, 1])
    const add = decomposeClassical(new Array(12).fill(5), 4, 'additive')
    expect(add.figure).toEqual([0, 0, 0, 0])
    expect(add.trend).toEqual([NaN, NaN, 5, 5, 5, 5, 5, 5, 5, 5, NaN, NaN])
  })

  // Hand computation, odd season length 3: trend = 6 at t = 1..4 (0-based);
  // differences 0 (position 1), 3 (2), -3 (0), 0 (1) give the figure [-3, 0, 3].
  it('works through an odd season length by hand', () => {
    const d = decomposeClassical([3, 6, 9, 3, 6, 9], 3, 'additive')
    expect(d.trend).toEqual([NaN, 6, 6, 6, 6, NaN])
    expect(d.figure).toEqual([-3, 0, 3])
    expect(d.seasonal).toEqual([-3, 0, 3, -3, 0, 3])
  })

  // Source: base R 4.2.2 stats::decompose on datasets::AirPassengers
  // (fixture from scripts/fixtures/r_decompose.R). Tolerance 1e-9 relative as
  // required; measured < 5e-16.
  for (const type of ['multiplicative', 'additive'] as const) {
    it(`matches R decompose(type = "${type}") on AirPassengers`, () => {
      const d = decomposeClassical(r.series, r.seasonLength, type)
      const ref = r[type]
      closeR(d.figure, ref.figure, 1e-9)
      closeR(d.seasonal, ref.seasonal, 1e-9)
      closeR(d.trend, ref.trend, 1e-9)
      closeR(d.random, ref.random, 1e-9, type === 'additive' ? 1e-9 : 0)
    })
  }
})

describe('seasonalPositionFactors', () => {
  it('rejects negative values and all-zero data', () => {
    expectEngineError(() => seasonalPositionFactors([1, 2, -3, 4, 5, 6, 7, 8], 4), 'not-positive')
    expectEngineError(() => seasonalPositionFactors(new Array(8).fill(0), 4), 'not-positive')
  })

  // Hand computation: position means 2, 4, 6 (overall 4) give factors 0.5, 1, 1.5.
  it('divides each position mean by the mean of the position means', () => {
    expect(seasonalPositionFactors([1, 3, 5, 3, 5, 7], 3)).toEqual([0.5, 1, 1.5])
  })

  // Source: R, tapply(x, position, mean) / mean(position means) on AirPassengers
  // (scripts/fixtures/r_decompose.R). Measured < 5e-16.
  it('matches the R computation on AirPassengers', () => {
    closeR(seasonalPositionFactors(r.series, 12), r.decomposition.factors, 1e-12)
  })
})
