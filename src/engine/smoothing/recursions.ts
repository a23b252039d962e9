/**
 * Exponential-smoothing recursions with fixed parameters and initial states.
 *
 * Component (smoothing-equation) form, the same convention as statsmodels'
 * `holtwinters.ExponentialSmoothing` (checked against 0.13.5 in the tests).
 * With base[t] = level[t-1] + phi * trend[t-1]:
 *   fitted[t]  = base[t] + s[t-m]                  (additive seasonality)
 *              = base[t] * s[t-m]                  (multiplicative)
 *   level[t]   = alpha * (y[t] - s[t-m]) + (1 - alpha) * base[t]      (add)
 *              = alpha * y[t] / s[t-m]   + (1 - alpha) * base[t]      (mul)
 *   trend[t]   = beta * (level[t] - level[t-1]) + (1 - beta) * phi * trend[t-1]
 *   s[t]       = gamma * (y[t] - base[t]) + (1 - gamma) * s[t-m]      (add)
 *              = gamma * y[t] / base[t]   + (1 - gamma) * s[t-m]      (mul)
 *   forecast(h) = level[n] + (phi + phi^2 + ... + phi^h) * trend[n]  (+ or *) s[n+h-m(k+1)]
 * Symbols: alpha = level smoothing, beta = trend smoothing (beta* in Hyndman,
 * Koehler, Ord and Snyder 2008; their error-correction beta is alpha * beta),
 * gamma = seasonal smoothing, phi = trend damping (1 = undamped).
 * Damped trend as Gardner and McKenzie (1985). `initial.seasonal[j]` is the
 * seasonal state used for y[j], j = 0..m-1. O(n).
 */
import { EngineInputError } from '../errors.js'

export type SeasonalKind = 'add' | 'mul'

export interface SmoothingStates {
  readonly level: number
  readonly trend?: number
  /** m values; entry j applies to y[j]. */
  readonly seasonal?: readonly number[]
}

export interface SmoothingSetup {
  readonly alpha: number
  readonly beta?: number
  readonly gamma?: number
  /** Damping; default 1 (undamped). */
  readonly phi?: number
  readonly seasonLength?: number
  readonly seasonal?: SeasonalKind
  readonly initial: SmoothingStates
}

export interface SmoothingRun {
  /** One-step-ahead predictions, fitted[t] made from data before t. */
  readonly fitted: number[]
  readonly residuals: number[]
  readonly sse: number
  /** States after the last observation. */
  readonly level: number
  readonly trend: number
  /** Seasonal states for the next m periods: entry k applies to period n + 1 + k. */
  readonly seasonalAhead: number[]
  readonly phi: number
  readonly seasonal: SeasonalKind | null
  forecast(horizon: number): number[]
}

function checkUnit(name: string, v: number, lo: number, hi: number): void {
  if (!(v >= lo && v <= hi)) throw new EngineInputError('invalid-option', `${name} must be in [${lo}, ${hi}]`, name)
}

/**
 * Run the recursion above. All smoothing parameters must lie in [0, 1], phi in (0, 1].
 * @throws EngineInputError on empty or non-finite input, bad parameters, or if a
 *   state becomes non-finite (e.g. multiplicative seasonality with a level near zero)
 */
export function runSmoothing(series: ArrayLike<number>, setup: SmoothingSetup): SmoothingRun {
  const n = series.length
  if (n === 0) throw new EngineInputError('empty-series', 'series is empty', 'demand')
  const alpha = setup.alpha
  const beta = setup.beta ?? 0
  const gamma = setup.gamma ?? 0
  const phi = setup.phi ?? 1
  checkUnit('alpha', alpha, 0, 1)
  checkUnit('beta', beta, 0, 1)
  checkUnit('gamma', gamma, 0, 1)
  if (!(phi > 0 && phi <= 1)) throw new EngineInputError('invalid-option', 'phi must be in (0, 1]', 'phi')
  const kind = setup.seasonal ?? null
  const m = kind ? (setup.seasonLength ?? 0) : 1
  const init = setup.initial.seasonal
  if (kind && (!Number.isInteger(m) || m < 2 || !init || init.length !== m)) {
    throw new EngineInputError('invalid-option', 'seasonal models need seasonLength >= 2 and that many initial seasonal states', 'seasonLength')
  }
  const s = new Float64Array(m)
  if (kind && init) for (let j = 0; j < m; j++) s[j] = init[j]!
  for (let t = 0; t < n; t++) {
    if (!Number.isFinite(series[t])) throw new EngineInputError('non-finite-value', `demand[${t}] is not a finite number`, `demand[${t}]`)
  }
  const fitted = new Array<number>(n)
  const residuals = new Array<number>(n)
  const end = smoothingPass(series, alpha, beta, gamma, phi, kind, s, setup.initial.level, setup.initial.trend ?? 0, fitted, residuals)
  const seasonalAhead = seasonalAheadOf(s, kind, n)
  const { level: l, trend: b } = end
  return {
    fitted,
    residuals,
    sse: end.sse,
    level: l,
    trend: b,
    seasonalAhead,
    phi,
    seasonal: kind,
    forecast: (horizon) => forecastStates(l, b, phi, kind, seasonalAhead, horizon),
  }
}

/** Where one pass of the recursion ends. */
export interface PassEnd {
  readonly sse: number
  readonly level: number
  readonly trend: number
  /** The first one-step error (SES drops it: its level starts at y[0]). */
  readonly firstResidual: number
}

/**
 * One pass of the recursion above over finite `series` with valid parameters; `s` holds
 * the m seasonal states (length 1 and unused without season) and is left at the final
 * states. Writes fitted values and residuals when arrays are given: the same arithmetic
 * either way, so a pass without arrays ends in exactly the same states and SSE.
 * @throws EngineInputError if a state becomes non-finite
 */
export function smoothingPass(
  series: ArrayLike<number>,
  alpha: number,
  beta: number,
  gamma: number,
  phi: number,
  kind: SeasonalKind | null,
  s: Float64Array,
  level: number,
  trend: number,
  fitted: number[] | null,
  residuals: number[] | null,
): PassEnd {
  const n = series.length
  const m = s.length
  let l = level
  let b = trend
  let sse = 0
  let first = NaN
  let j = 0
  for (let t = 0; t < n; t++) {
    const y = series[t]!
    const base = l + phi * b
    const sj = s[j]!
    let f: number
    let lNew: number
    if (kind === 'add') {
      f = base + sj
      lNew = alpha * (y - sj) + (1 - alpha) * base
      s[j] = gamma * (y - base) + (1 - gamma) * sj
    } else if (kind === 'mul') {
      f = base * sj
      lNew = (alpha * y) / sj + (1 - alpha) * base
      s[j] = (gamma * y) / base + (1 - gamma) * sj
    } else {
      f = base
      lNew = alpha * y + (1 - alpha) * base
    }
    b = beta * (lNew - l) + (1 - beta) * phi * b
    l = lNew
    const e = y - f
    if (fitted !== null) fitted[t] = f
    if (residuals !== null) residuals[t] = e
    if (t === 0) first = e
    sse += e * e
    if (++j === m) j = 0
  }
  let finiteStates = Number.isFinite(sse) && Number.isFinite(l) && Number.isFinite(b)
  for (let k = 0; k < m && finiteStates; k++) finiteStates = Number.isFinite(s[k])
  if (!finiteStates) {
    throw new EngineInputError('non-finite-value', 'smoothing states became non-finite for these parameters')
  }
  return { sse, level: l, trend: b, firstResidual: first }
}

/** Seasonal states for the next m periods after n observations (zeros without season). */
export function seasonalAheadOf(s: Float64Array, kind: SeasonalKind | null, n: number): number[] {
  const m = s.length
  const out = new Array<number>(m)
  for (let k = 0; k < m; k++) out[k] = kind ? s[(n + k) % m]! : 0
  return out
}

/** level + (phi + ... + phi^h) * trend, combined with the seasonal state for that period. */
export function forecastStates(
  level: number,
  trend: number,
  phi: number,
  kind: SeasonalKind | null,
  seasonalAhead: readonly number[],
  horizon: number,
): number[] {
  const out = new Array<number>(Math.max(0, Math.floor(horizon)))
  const m = seasonalAhead.length
  let damp = 0
  let pow = 1
  for (let h = 0; h < out.length; h++) {
    pow *= phi
    damp += pow
    const base = level + damp * trend
    out[h] = kind === 'add' ? base + seasonalAhead[h % m]! : kind === 'mul' ? base * seasonalAhead[h % m]! : base
  }
  return out
}

/** Simple exponential smoothing (no trend, no season). */
export function runSimpleSmoothing(series: readonly number[], p: { alpha: number; initialLevel: number }): SmoothingRun {
  return runSmoothing(series, { alpha: p.alpha, initial: { level: p.initialLevel } })
}

/** Holt's linear trend; pass phi < 1 for the additive damped trend. */
export function runHolt(
  series: readonly number[],
  p: { alpha: number; beta: number; phi?: number; initial: { level: number; trend: number } },
): SmoothingRun {
  return runSmoothing(series, { alpha: p.alpha, beta: p.beta, phi: p.phi, initial: p.initial })
}

/** Holt-Winters with additive or multiplicative seasonality; phi < 1 damps the trend. */
export function runHoltWinters(
  series: readonly number[],
  p: {
    alpha: number
    beta: number
    gamma: number
    phi?: number
    seasonLength: number
    seasonal: SeasonalKind
    initial: { level: number; trend: number; seasonal: readonly number[] }
  },
): SmoothingRun {
  return runSmoothing(series, p)
}
