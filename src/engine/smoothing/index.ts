/**
 * The exponential-smoothing family as `ModelSpec`s:
 *  - 'level-smoothing': simple exponential smoothing (Brown 1956; ETS ANN);
 *  - 'trend-smoothing': Holt's linear trend (Holt 1957; ETS AAN);
 *  - 'damped-trend-smoothing': additive damped trend (Gardner and McKenzie 1985; ETS AAdN);
 *  - 'trend-smoothing-additive-season' / '-multiplicative' (Winters 1960) and their damped variants;
 *  - 'level-smoothing-additive-season' / '-multiplicative': the same seasonal recursions
 *    without a trend (ETS ANA and ANM in the taxonomy of Hyndman,
 *    Koehler, Ord and Snyder 2008; from memory).
 * Fitting: fit.ts. Fixed-parameter recursions: recursions.ts.
 * Complexity counts smoothing parameters plus initial-state blocks (level, trend, seasonal).
 */
import type { ModelSpec } from '../types.js'
import { fitSmoothing } from './fit.js'
import { minLengthOf, type SmoothingShape } from './input.js'

export { runSmoothing, runSimpleSmoothing, runHolt, runHoltWinters, forecastStates } from './recursions.js'
export type { SeasonalKind, SmoothingRun, SmoothingSetup, SmoothingStates } from './recursions.js'
export { additiveErrorVariance } from './variance.js'
export { fitSmoothing } from './fit.js'

function spec(shape: SmoothingShape, complexity: number): ModelSpec {
  const seasonal = shape.seasonal !== null
  return {
    name: shape.name,
    family: seasonal ? (shape.trend === 'none' ? 'seasonal' : 'seasonal-trend') : shape.trend === 'none' ? 'level' : 'trend',
    complexity,
    seasonal,
    requiresPositive: shape.seasonal === 'mul',
    minLength: (m) => minLengthOf(shape, m),
    fit: (series, ctx) => fitSmoothing(shape, series, ctx),
  }
}

export const smoothingModels: readonly ModelSpec[] = [
  spec({ name: 'level-smoothing', trend: 'none', seasonal: null }, 2),
  spec({ name: 'trend-smoothing', trend: 'linear', seasonal: null }, 4),
  spec({ name: 'damped-trend-smoothing', trend: 'damped', seasonal: null }, 5),
  spec({ name: 'trend-smoothing-additive-season', trend: 'linear', seasonal: 'add' }, 6),
  spec({ name: 'trend-smoothing-multiplicative-season', trend: 'linear', seasonal: 'mul' }, 6),
  spec({ name: 'damped-trend-smoothing-additive-season', trend: 'damped', seasonal: 'add' }, 7),
  spec({ name: 'damped-trend-smoothing-multiplicative-season', trend: 'damped', seasonal: 'mul' }, 7),
  spec({ name: 'level-smoothing-additive-season', trend: 'none', seasonal: 'add' }, 4),
  spec({ name: 'level-smoothing-multiplicative-season', trend: 'none', seasonal: 'mul' }, 4),
]
