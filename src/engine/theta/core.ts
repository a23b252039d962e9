/**
 * What the optimised Theta models of Fiorucci, Pellegrini, Louzada, Petropoulos and
 * Koehler (2016), "Models for optimising the theta method and their relationship to
 * state space models", IJF 32(4), 1151-1161, have in common (equations from memory,
 * re-derived from the theta-line construction; see optimised-theta.ts).
 *
 * On the seasonally adjusted series Y_1..Y_n, with A_t, B_t the intercept and slope of
 * the least-squares line through Y_1..Y_t:
 *   mu_t = l_{t-1} + (1 - 1/theta) [ (1 - alpha)^{t-1} A + (1 - (1 - alpha)^t) / alpha * B ]
 *   l_t  = alpha Y_t + (1 - alpha) l_{t-1}
 * where (A, B) = (A_n, B_n) for the static model (OTM) and (A_{t-1}, B_{t-1}) for the
 * dynamic one (DOTM). Forecasts from origin n:
 *   Y_{n+h} = l_n + (1 - 1/theta) [ (1 - alpha)^n A_n + ((1 - (1 - alpha)^{n+1}) / alpha + h - 1) B_n ],
 * which is the same recursion run on with zero errors. theta = 1 is simple exponential
 * smoothing; theta = 2 with l_0 = Y_1 is the standard Theta method.
 * Estimation: theta, alpha and l_0 minimise the in-sample one-step squared error (the
 * Gaussian likelihood of the paper's state-space form), by bounded Nelder-Mead.
 * Variance (HKOS 2008-style, treating A_n, B_n as fixed): sigma^2 (1 + (h - 1) alpha^2),
 * since Y_{n+h} - mu = eps_{n+h} + alpha (eps_{n+1} + ... + eps_{n+h-1}).
 */
import { minimiseNelderMead } from '../optimise.js'

export const ALPHA_MIN = 0.001
export const ALPHA_MAX = 1
export const THETA_MIN = 1
/** Our bound, not the paper's: beyond 10 the forecast slope hardly changes, (1 - 1/theta). */
export const THETA_MAX = 10

export interface ThetaParams {
  readonly alpha: number
  readonly theta: number
  readonly startLevel: number
}

export interface ThetaRun {
  readonly sse: number
  /** l_n */
  readonly level: number
  /** A_n, B_n: the least-squares line through all n values. */
  readonly intercept: number
  readonly slope: number
}

/** Least-squares intercept (at t = 0) and slope of y against t = 1..n. */
export function lineOnIndex(y: readonly number[]): { intercept: number; slope: number } {
  const n = y.length
  let meanY = 0
  for (let t = 0; t < n; t++) meanY += y[t]!
  meanY /= n
  const meanT = (n + 1) / 2
  let sxy = 0
  let sxx = 0
  for (let t = 0; t < n; t++) {
    const d = t + 1 - meanT
    sxy += d * (y[t]! - meanY)
    sxx += d * d
  }
  const slope = sxx > 0 ? sxy / sxx : 0
  return { intercept: meanY - slope * meanT, slope }
}

/**
 * One pass of the model; `dynamic` selects DOTM. Writes mu_t into `fitted` when given.
 * DOTM's line follows the data: Ybar_t = ((t - 1) Ybar_{t-1} + Y_t) / t,
 * B_t = (t - 2)/(t + 1) B_{t-1} + 6 / (t + 1) (Y_t - Ybar_{t-1}) / t, A_t = Ybar_t - (t + 1)/2 B_t,
 * starting from A_0 = B_0 = 0 (no line before any data) and B_1 = 0.
 */
export function runTheta(y: readonly number[], p: ThetaParams, dynamic: boolean, fitted?: number[]): ThetaRun {
  const n = y.length
  const weight = 1 - 1 / p.theta
  const { alpha } = p
  const line = lineOnIndex(y)
  let level = p.startLevel
  let decay = 1 // (1 - alpha)^{t-1}
  let a = dynamic ? 0 : line.intercept
  let b = dynamic ? 0 : line.slope
  let mean = 0
  let sse = 0
  for (let t = 1; t <= n; t++) {
    const next = decay * (1 - alpha)
    const mu = level + weight * (decay * a + ((1 - next) / alpha) * b)
    if (fitted) fitted[t - 1] = mu
    const yt = y[t - 1]!
    const e = yt - mu
    sse += e * e
    level = alpha * yt + (1 - alpha) * level
    decay = next
    if (dynamic) {
      const previousMean = mean
      mean = ((t - 1) * mean + yt) / t
      b = t === 1 ? 0 : ((t - 2) / (t + 1)) * b + (6 / (t + 1)) * ((yt - previousMean) / t)
      a = mean - ((t + 1) / 2) * b
    }
  }
  return { sse, level, intercept: dynamic ? a : line.intercept, slope: dynamic ? b : line.slope }
}

export function thetaForecast(run: ThetaRun, p: ThetaParams, n: number, horizon: number): number[] {
  const weight = 1 - 1 / p.theta
  const decay = Math.pow(1 - p.alpha, n)
  const tail = (1 - decay * (1 - p.alpha)) / p.alpha
  const out = new Array<number>(horizon)
  for (let h = 1; h <= horizon; h++) out[h - 1] = run.level + weight * (decay * run.intercept + (tail + h - 1) * run.slope)
  return out
}

/** Minimises the one-step SSE over alpha, theta and l_0, from a small grid of starts. */
export function estimateTheta(y: readonly number[], dynamic: boolean): ThetaParams {
  let mean = 0
  for (const v of y) mean += v
  mean /= y.length
  let ss = 0
  for (const v of y) ss += (v - mean) * (v - mean)
  const spread = Math.max(Math.sqrt(ss / y.length), 1e-6 * Math.abs(mean), 1e-9)
  const y0 = y[0]!
  const lower = [ALPHA_MIN, THETA_MIN, y0 - 3 * spread]
  const upper = [ALPHA_MAX, THETA_MAX, y0 + 3 * spread]
  const objective = (x: readonly number[]): number => runTheta(y, { alpha: x[0]!, theta: x[1]!, startLevel: x[2]! }, dynamic).sse
  let best = { x: [0.5, 2, y0], value: Infinity }
  for (const alpha of [0.1, 0.5, 0.9]) {
    for (const theta of [1.5, 3]) {
      const r = minimiseNelderMead(objective, [alpha, theta, y0], lower, upper, { maxEvaluations: 300, relTol: 1e-10 })
      if (r.value < best.value) best = r
    }
  }
  const polish = minimiseNelderMead(objective, best.x, lower, upper, { maxEvaluations: 300, relTol: 1e-12, step: 0.02 })
  if (polish.value < best.value) best = polish
  return { alpha: best.x[0]!, theta: best.x[1]!, startLevel: best.x[2]! }
}
