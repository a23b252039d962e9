/**
 * Input and output guards shared by the trend, seasonal and intermittent fitters.
 * Every fitter calls `checkSeries` first and `checkHorizon` in `forecast`, so that
 * bad input fails with an EngineInputError and NaN or Infinity never leaves a fit.
 */
import { EngineInputError, tooShort } from '../errors.js'

/**
 * @throws EngineInputError 'empty-series' when empty, 'non-finite-value' on NaN or
 *   ±Infinity (field `values[i]`), 'series-too-short' below `minimum` points.
 */
export function checkSeries(series: readonly number[], method: string, minimum: number): void {
  if (series.length === 0) throw new EngineInputError('empty-series', `${method} requires a non-empty series`)
  for (let i = 0; i < series.length; i++) {
    const v = series[i]
    if (typeof v !== 'number' || !Number.isFinite(v)) {
      throw new EngineInputError('non-finite-value', `${method}: value ${i} is not a finite number`, `values[${i}]`)
    }
  }
  if (series.length < minimum) throw tooShort(method, minimum)
}

/** @throws EngineInputError 'negative-value' at the first negative value. */
export function checkNonNegative(series: readonly number[], method: string): void {
  for (let i = 0; i < series.length; i++) {
    if (series[i] < 0) {
      throw new EngineInputError('negative-value', `${method} requires non-negative data`, `values[${i}]`)
    }
  }
}

/** @throws EngineInputError 'invalid-option' when the season length is not an integer >= 2. */
export function checkSeasonLength(seasonLength: number, method: string): void {
  if (!Number.isInteger(seasonLength) || seasonLength < 2) {
    throw new EngineInputError('invalid-option', `${method} requires a season length of at least 2`, 'seasonLength')
  }
}

/** @throws EngineInputError 'invalid-option' unless horizon is an integer >= 0. */
export function checkHorizon(horizon: number): void {
  if (!Number.isInteger(horizon) || horizon < 0) {
    throw new EngineInputError('invalid-option', 'horizon must be a non-negative integer', 'horizon')
  }
}

/**
 * Last line of defence: a fit whose parameters or forecasts overflow (values near
 * ±1.8e308) is reported as bad input instead of returning Infinity or NaN.
 * @throws EngineInputError 'non-finite-value'
 */
export function checkFinite(values: ArrayLike<number>, method: string): void {
  for (let i = 0; i < values.length; i++) {
    if (!Number.isFinite(values[i])) {
      throw new EngineInputError('non-finite-value', `${method} produced a non-finite value; the data are out of range`)
    }
  }
}

/**
 * Fitted values are NaN only where the model has none (before index `from`);
 * from there on they must be finite.
 * @throws EngineInputError 'non-finite-value'
 */
export function checkFitted(fitted: readonly number[], from: number, method: string): void {
  for (let t = Math.max(0, from); t < fitted.length; t++) {
    if (!Number.isFinite(fitted[t])) {
      throw new EngineInputError('non-finite-value', `${method} produced a non-finite value; the data are out of range`)
    }
  }
}
