/** Input checks and small helpers shared by the smoothing fitters. Pure. */
import { EngineInputError, tooShort } from '../errors.js'
import type { ModelName, ModelParams } from '../types.js'
import type { SeasonalKind } from './recursions.js'

export interface SmoothingShape {
  readonly name: ModelName
  readonly trend: 'none' | 'linear' | 'damped'
  readonly seasonal: SeasonalKind | null
}

/** Minimum training length: two full seasons for seasonal models (common practice), else 3 or 2. */
export function minLengthOf(shape: SmoothingShape, seasonLength: number): number {
  if (shape.seasonal) return 2 * seasonLength
  return shape.trend === 'none' ? 2 : 3
}

/**
 * Checks the series for this model and returns max|y| (1 for an all-zero series).
 * @throws EngineInputError: invalid-option (season length), empty-series,
 *   series-too-short, non-finite-value, not-positive (multiplicative models)
 */
export function checkedScale(shape: SmoothingShape, series: readonly number[], m: number): number {
  const n = series.length
  if (shape.seasonal && !(Number.isInteger(m) && m >= 2)) {
    throw new EngineInputError('invalid-option', `${shape.name} needs a season length of at least 2`, 'seasonLength')
  }
  if (n === 0) throw new EngineInputError('empty-series', 'series is empty', 'demand')
  const minimum = minLengthOf(shape, m)
  if (n < minimum) throw tooShort(shape.name, minimum, n)
  let scale = 0
  for (let t = 0; t < n; t++) {
    const v = series[t]!
    if (!Number.isFinite(v)) throw new EngineInputError('non-finite-value', `demand[${t}] is not a finite number`, `demand[${t}]`)
    if (shape.seasonal === 'mul' && !(v > 0)) {
      throw new EngineInputError('not-positive', `${shape.name} needs demand above zero in every period (demand[${t}] is ${v})`, `demand[${t}]`)
    }
    const a = Math.abs(v)
    if (a > scale) scale = a
  }
  return scale > 0 ? scale : 1
}

/** Keeps results inside double range: +-Infinity becomes +-Number.MAX_VALUE (NaN cannot occur here). */
export function finite(v: number): number {
  return v > Number.MAX_VALUE ? Number.MAX_VALUE : v < -Number.MAX_VALUE ? -Number.MAX_VALUE : v
}

export function readParam(p: ModelParams | undefined, key: string): number | undefined {
  const v = p?.[key]
  return typeof v === 'number' && Number.isFinite(v) ? v : undefined
}
