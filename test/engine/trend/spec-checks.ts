/**
 * Shared special-case checks for every ModelSpec of the trend, seasonal and
 * intermittent families: bad input fails with the right EngineInputError code,
 * and whatever is returned is finite (fitted values are finite or NaN).
 */
import { expect } from 'vitest'
import { EngineInputError, type EngineErrorCode } from '../../../src/engine/errors.js'
import type { ModelFit, ModelSpec } from '../../../src/engine/types.js'

export function expectEngineError(run: () => unknown, code: EngineErrorCode, message?: string): void {
  let caught: unknown
  try {
    run()
  } catch (err) {
    caught = err
  }
  expect(caught).toBeInstanceOf(EngineInputError)
  expect((caught as EngineInputError).code).toBe(code)
  if (message !== undefined) expect((caught as EngineInputError).message).toBe(message)
}

export function expectSane(fit: ModelFit, n: number, horizon = 12): number[] {
  expect(fit.fitted).toHaveLength(n)
  for (const v of fit.fitted) expect(Number.isNaN(v) || Number.isFinite(v)).toBe(true)
  const fc = fit.forecast(horizon)
  expect(fc).toHaveLength(horizon)
  for (const v of fc) expect(Number.isFinite(v)).toBe(true)
  if (fit.forecastVariance) {
    const fv = fit.forecastVariance(horizon)
    expect(fv).toHaveLength(horizon)
    for (const v of fv) expect(Number.isFinite(v) && v >= 0).toBe(true)
  }
  expect(fit.forecast(0)).toEqual([])
  expectEngineError(() => fit.forecast(-1), 'invalid-option')
  expectEngineError(() => fit.forecast(1.5), 'invalid-option')
  for (const value of Object.values(fit.params)) {
    const list = typeof value === 'number' ? [value] : value
    for (const v of list) expect(Number.isFinite(v)).toBe(true)
  }
  return fc
}

/** Empty, NaN, Infinity and one point too short. */
export function expectInputGuards(spec: ModelSpec, seasonLength: number): void {
  const ctx = { seasonLength }
  expectEngineError(() => spec.fit([], ctx), 'empty-series')
  const min = spec.minLength(seasonLength)
  const ok = Array.from({ length: Math.max(min, 2) }, (_, i) => 10 + (i % 3))
  const withNaN = ok.slice()
  withNaN[1] = NaN
  expectEngineError(() => spec.fit(withNaN, ctx), 'non-finite-value')
  const withInf = ok.slice()
  withInf[0] = Infinity
  expectEngineError(() => spec.fit(withInf, ctx), 'non-finite-value')
  if (min > 1) {
    expectEngineError(
      () => spec.fit(ok.slice(0, min - 1), ctx),
      'series-too-short',
      `${spec.name} needs ${min} periods, has ${min - 1}`,
    )
  }
}
