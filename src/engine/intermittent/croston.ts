/**
 * 'croston' (Croston 1972) and 'croston-bias-corrected' (Syntetos and Boylan 2005).
 *
 * Only periods with demand update the estimates. With q the number of periods
 * since the previous demand:
 *   size[k]     = size[k-1]     + alpha * (y[t] - size[k-1])
 *   interval[k] = interval[k-1] + alpha * (q    - interval[k-1])
 * Forecast per period: size / interval (Croston), times (1 - alpha/2) for SBA.
 * Initialisation (common practice): size = the first demand, interval = its
 * 1-based position (the interval counted from just before the series start).
 * Fitted value at t is the forecast made before seeing y[t]; NaN up to and
 * including the first demand.
 *
 * alpha: chosen from {0.05, 0.1, ..., 0.3} by the in-sample mean squared one-step
 * error over all periods after the first demand, ties to the smaller alpha (grid
 * and range are common practice, no source). Needs non-negative data with at least
 * two non-zero demands. Params: levelWeight (alpha), demandSize and demandInterval
 * (the smoothed size and interval), biasFactor (1 - alpha/2, bias-corrected only).
 */
import { EngineInputError } from '../errors.js'
import type { FitContext, ModelFit, ModelSpec } from '../types.js'
import { checkFinite, checkFitted, checkHorizon, checkNonNegative, checkSeries } from '../trend/guards.js'

export type CrostonVariant = 'croston' | 'croston-bias-corrected'
export const CROSTON_ALPHAS: readonly number[] = [0.05, 0.1, 0.15, 0.2, 0.25, 0.3]
const MIN_LENGTH = 3

export interface CrostonOptions {
  readonly variant?: CrostonVariant
  /** Fixed alpha in (0, 1]; omitted: chosen from CROSTON_ALPHAS. */
  readonly alpha?: number
}

interface CrostonState {
  size: number
  interval: number
  sse: number
}

/** One pass; writes fitted values when `fitted` is given. O(n), no allocation. */
function run(y: readonly number[], first: number, alpha: number, factor: number, fitted?: number[]): CrostonState {
  let size = y[first]!
  let interval = first + 1
  let last = first
  let sse = 0
  for (let t = first + 1; t < y.length; t++) {
    const f = (factor * size) / interval
    if (fitted) fitted[t] = f
    const e = y[t]! - f
    sse += e * e
    if (y[t]! > 0) {
      size += alpha * (y[t]! - size)
      interval += alpha * (t - last - interval)
      last = t
    }
  }
  return { size, interval, sse }
}

export function fitCroston(series: readonly number[], options: CrostonOptions = {}): ModelFit {
  const variant = options.variant ?? 'croston'
  checkSeries(series, variant, MIN_LENGTH)
  checkNonNegative(series, variant)
  if (options.alpha !== undefined && !(options.alpha > 0 && options.alpha <= 1)) {
    throw new EngineInputError('invalid-option', 'alpha must be in (0, 1]', 'alpha')
  }
  let first = -1
  let demands = 0
  for (let t = 0; t < series.length; t++) {
    if (series[t]! > 0) {
      if (first < 0) first = t
      demands++
    }
  }
  if (demands < 2) {
    throw new EngineInputError('series-too-short', `${variant} needs 2 periods with demand, has ${demands}`)
  }
  const biasFactor = (a: number): number => (variant === 'croston-bias-corrected' ? 1 - a / 2 : 1)
  let alpha = options.alpha ?? CROSTON_ALPHAS[0]!
  if (options.alpha === undefined) {
    let best = run(series, first, alpha, biasFactor(alpha)).sse
    for (let i = 1; i < CROSTON_ALPHAS.length; i++) {
      const a = CROSTON_ALPHAS[i]!
      const s = run(series, first, a, biasFactor(a)).sse
      if (s < best) {
        best = s
        alpha = a
      }
    }
  }
  const fitted = new Array<number>(series.length).fill(NaN)
  const factor = biasFactor(alpha)
  const { size, interval } = run(series, first, alpha, factor, fitted)
  const rate = (factor * size) / interval
  checkFinite([size, interval, rate], variant)
  checkFitted(fitted, first + 1, variant)
  const params: Record<string, number> = { levelWeight: alpha, demandSize: size, demandInterval: interval }
  if (variant === 'croston-bias-corrected') params.biasFactor = factor
  return {
    model: variant,
    params,
    fitted,
    forecast(horizon: number): number[] {
      checkHorizon(horizon)
      return new Array<number>(horizon).fill(rate)
    },
  }
}

export const croston: ModelSpec = {
  name: 'croston',
  family: 'intermittent',
  complexity: 3,
  seasonal: false,
  requiresPositive: false,
  minLength: () => MIN_LENGTH,
  fit: (series: readonly number[], _ctx: FitContext) => fitCroston(series, { variant: 'croston' }),
}

export const sba: ModelSpec = {
  name: 'croston-bias-corrected',
  family: 'intermittent',
  complexity: 3,
  seasonal: false,
  requiresPositive: false,
  minLength: () => MIN_LENGTH,
  fit: (series: readonly number[], _ctx: FitContext) => fitCroston(series, { variant: 'croston-bias-corrected' }),
}
