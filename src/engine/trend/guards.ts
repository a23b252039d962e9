/**
 * Input and output guards shared by the trend, seasonal and intermittent fitters.
 * Every fitter calls `checkSeries` first and `checkHorizon` in `forecast`, so that
 * bad input fails with an EngineInputError and NaN or Infinity never leaves a fit.
 */
import { EngineInputError, tooShort } from '../errors.js'

/**
 * `model` is the public model id the messages name.
 * @throws EngineInputError 'empty-series' when empty, 'non-finite-value' on NaN or
 *   ±Infinity (field `demand[i]`), 'series-too-short' below `minimum` periods.
 */
export function checkSeries(series: readonly number[], model: string, minimum: number): void {
  if (series.length === 0) throw new EngineInputError('empty-series', `${model} needs ${minimum} periods, has 0`)
  for (let i = 0; i < series.length; i++) {
    const v = series[i]
    if (typeof v !== 'number' || !Number.isFinite(v)) {
      throw new EngineInputError('non-finite-value', `${model}: demand[${i}] is not a finite number`, `demand[${i}]`)
    }
  }
  if (series.length < minimum) throw tooShort(model, minimum, series.length)
}

/** @throws EngineInputError 'negative-value' at the first negative value. */
export function checkNonNegative(series: readonly number[], model: string): void {
  for (let i = 0; i < series.length; i++) {
    if (series[i]! < 0) {
      throw new EngineInputError('negative-value', `${model} needs demand of zero or more (demand[${i}] is ${series[i]})`, `demand[${i}]`)
    }
  }
}

/** @throws EngineInputError 'invalid-option' when the season length is not an integer >= 2. */
export function checkSeasonLength(seasonLength: number, model: string): void {
  if (!Number.isInteger(seasonLength) || seasonLength < 2) {
    throw new EngineInputError('invalid-option', `${model} needs a season length of at least 2`, 'seasonLength')
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
export function checkFinite(values: ArrayLike<number>, model: string): void {
  for (let i = 0; i < values.length; i++) {
    if (!Number.isFinite(values[i])) {
      throw new EngineInputError('non-finite-value', `${model} produced a non-finite value; the demand is out of range`)
    }
  }
}

/**
 * Fitted values are NaN only where the model has none (before index `from`);
 * from there on they must be finite.
 * @throws EngineInputError 'non-finite-value'
 */
export function checkFitted(fitted: readonly number[], from: number, model: string): void {
  for (let t = Math.max(0, from); t < fitted.length; t++) {
    if (!Number.isFinite(fitted[t])) {
      throw new EngineInputError('non-finite-value', `${model} produced a non-finite value; the demand is out of range`)
    }
  }
}
