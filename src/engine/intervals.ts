/**
 * Prediction intervals around point forecasts.
 *
 * - 'analytical': the fit provides forecastVariance(h) (a published formula, see types.ts);
 *   bounds = point ± z · sqrt(var[h]).
 * - 'empirical': otherwise sigma_1 = root mean square of the in-sample one-step residuals
 *   and sigma_h = sigma_1 · sqrt(h) (common practice: it is exact for a random walk and
 *   a rough, usually optimistic-for-trends guide elsewhere). We prefer residuals over the
 *   few holdout errors because the holdout holds at most one error per step, too few to
 *   estimate a spread per step.
 * - 'none': no spread can be estimated (fewer than 2 residuals, or a constant history);
 *   lower = upper = point.
 *
 * z is the standard normal quantile at (1 + level/100) / 2. Unless negatives are allowed,
 * lower bounds below zero are raised to zero and `clamped` is set. Pure.
 */
import { sum } from './numeric.js'

/** Wichura's PPND16 (Applied Statistics algorithm AS 241, 1988), about 1e-16 relative accuracy. */
const A = [
  3.387132872796366608, 133.14166789178437745, 1971.5909503065514427, 13731.693765509461125,
  45921.953931549871457, 67265.770927008700853, 33430.575583588128105, 2509.0809287301226727,
]
const B = [
  1, 42.313330701600911252, 687.1870074920579083, 5394.1960214247511077, 21213.794301586595867,
  39307.89580009271061, 28729.085735721942674, 5226.495278852854561,
]
const C = [
  1.42343711074968357734, 4.6303378461565452959, 5.7694972214606914055, 3.64784832476320460504,
  1.27045825245236838258, 0.24178072517745061177, 0.0227238449892691845833, 7.7454501427834140764e-4,
]
const D = [
  1, 2.05319162663775882187, 1.6763848301838038494, 0.68976733498510000455, 0.14810397642748007459,
  0.0151986665636164571966, 5.475938084995344946e-4, 1.05075007164441684324e-9,
]
const E = [
  6.6579046435011037772, 5.4637849111641143699, 1.7848265399172913358, 0.29656057182850489123,
  0.026532189526576123093, 0.0012426609473880784386, 2.71155556874348757815e-5, 2.01033439929228813265e-7,
]
const F = [
  1, 0.59983220655588793769, 0.13692988092273580531, 0.0148753612908506148525, 7.868691311456132591e-4,
  1.8463183175100546818e-5, 1.4215117583164458887e-7, 2.04426310338993978564e-15,
]

function poly(coef: readonly number[], x: number): number {
  let v = 0
  for (let i = coef.length - 1; i >= 0; i--) v = v * x + coef[i]!
  return v
}

/**
 * Standard normal quantile: the z with P(Z <= z) = p.
 * Returns -Infinity at p = 0, +Infinity at p = 1 and NaN outside [0, 1].
 */
export function normalQuantile(p: number): number {
  if (!(p >= 0 && p <= 1)) return NaN
  if (p === 0) return -Infinity
  if (p === 1) return Infinity
  const q = p - 0.5
  if (Math.abs(q) <= 0.425) {
    const r = 0.180625 - q * q
    return (q * poly(A, r)) / poly(B, r)
  }
  let r = Math.sqrt(-Math.log(q < 0 ? p : 1 - p))
  let z: number
  if (r <= 5) {
    r -= 1.6
    z = poly(C, r) / poly(D, r)
  } else {
    r -= 5
    z = poly(E, r) / poly(F, r)
  }
  return q < 0 ? -z : z
}

export interface IntervalBounds {
  readonly method: 'analytical' | 'empirical' | 'none'
  /** lower[levelKey][h], upper[levelKey][h]; levelKey is String(level). */
  readonly lower: Record<string, number[]>
  readonly upper: Record<string, number[]>
  readonly clamped: boolean
  /** The forecast error's standard deviation per step 1..h (0 for method 'none'). */
  readonly sd: readonly number[]
}

export interface IntervalInput {
  readonly point: readonly number[]
  readonly levels: readonly number[]
  /** Analytical variances for steps 1..h, when the model has them. */
  readonly variance?: readonly number[]
  /** In-sample one-step residuals (finite values only). */
  readonly residuals: readonly number[]
  readonly allowNegative: boolean
  /** Force 'none' (e.g. a constant history, where residuals say nothing about the future). */
  readonly none?: boolean
}

/** Standard deviations per step by the method described in the module comment. */
function stepSpreads(input: IntervalInput): { method: IntervalBounds['method']; sd: number[] } {
  const h = input.point.length
  if (input.none) return { method: 'none', sd: new Array(h).fill(0) }
  const v = input.variance
  if (v && v.length >= h && v.slice(0, h).every((x) => Number.isFinite(x) && x >= 0)) {
    return { method: 'analytical', sd: v.slice(0, h).map(Math.sqrt) }
  }
  const r = input.residuals
  if (r.length < 2) return { method: 'none', sd: new Array(h).fill(0) }
  const sigma1 = Math.sqrt(sum(r.map((e) => e * e)) / r.length)
  if (!Number.isFinite(sigma1)) return { method: 'none', sd: new Array(h).fill(0) }
  return { method: 'empirical', sd: input.point.map((_, i) => sigma1 * Math.sqrt(i + 1)) }
}

/** Bounds for every level; each interval contains its point and widens with level. */
export function buildIntervals(input: IntervalInput): IntervalBounds {
  const { method, sd } = stepSpreads(input)
  const lower: Record<string, number[]> = {}
  const upper: Record<string, number[]> = {}
  let clamped = false
  for (const level of input.levels) {
    const z = normalQuantile(0.5 + level / 200)
    const key = String(level)
    lower[key] = input.point.map((p, i) => {
      const lo = p - z * sd[i]!
      if (!Number.isFinite(lo)) return p
      if (!input.allowNegative && lo < 0) {
        clamped = true
        return 0
      }
      return lo
    })
    upper[key] = input.point.map((p, i) => {
      const hi = p + z * sd[i]!
      return Number.isFinite(hi) ? hi : p
    })
  }
  return { method, lower, upper, clamped, sd }
}
