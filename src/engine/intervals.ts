/**
 * Prediction intervals and quantiles around point forecasts.
 *
 * The model's own spread sd[h] per step:
 * - 'analytical': the fit provides forecastVariance(h) (a published formula, see types.ts);
 *   sd[h] = sqrt(var[h]).
 * - 'empirical': otherwise sigma_1 = root mean square of the in-sample one-step residuals
 *   and sd[h] = sigma_1 · sqrt(h) (common practice: it is exact for a random walk and
 *   a rough, usually optimistic-for-trends guide elsewhere).
 * - 'none': no spread can be estimated (fewer than 2 residuals, or a constant history);
 *   lower = upper = point.
 *
 * The half-width at central level p is k(p) · sd[h]. Without calibration k(p) is the
 * Student t quantile at (1 + p) / 2 with the fit's residual degrees of freedom (the normal
 * quantile when they are many): the t quantile adds the uncertainty of the estimated
 * spread, which matters for short histories (common practice for regression intervals).
 * 'calibrated': k(p) comes from the model's own standardised errors at rolling origins
 * inside the history (select/calibrate.ts): the split-conformal quantile of |error| / sd
 * (Vovk, Gammerman & Shafer 2005; Lei, G'Sell, Rinaldo, Tibshirani & Wasserman 2018, from
 * memory), in the spirit of the empirical intervals of Williams & Goodman (1971). Where
 * too few errors exist for level p, the small-sample predictive quantile stands in for it
 * (see `multiplier`). A `floor` per step (the naive method's spread for histories too
 * short to tell models apart) bounds sd from below.
 *
 * A quantile tau is the bound of the central interval at level |2 tau - 1| on its side,
 * so quantiles and intervals agree. Unless negatives are allowed, values below zero are
 * raised to zero and `clamped` is set. Pure.
 */
import { sum } from './numeric.js'
import type { IntervalMethod } from './types.js'

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

/**
 * Student t quantile with `df` degrees of freedom: exact for df 1 and 2, the Cornish-Fisher
 * expansion in the normal quantile for df >= 3 (Abramowitz & Stegun 1964, 26.7.5, from
 * memory), the normal quantile from df 200 on. Checked against R qt in the tests.
 */
export function studentQuantile(p: number, df: number): number {
  if (!(df > 0)) return NaN
  if (df >= 200) return normalQuantile(p)
  if (df === 1) return Math.tan(Math.PI * (p - 0.5))
  if (df === 2) return (2 * p - 1) / Math.sqrt(2 * p * (1 - p))
  const x = normalQuantile(p)
  const x2 = x * x
  const g1 = (x * (x2 + 1)) / 4
  const g2 = (x * ((5 * x2 + 16) * x2 + 3)) / 96
  const g3 = (x * (((3 * x2 + 19) * x2 + 17) * x2 - 15)) / 384
  const g4 = (x * ((((79 * x2 + 776) * x2 + 1482) * x2 - 1920) * x2 - 945)) / 92160
  return x + g1 / df + g2 / df ** 2 + g3 / df ** 3 + g4 / df ** 4
}

/**
 * Split-conformal quantile of `sortedScores` (ascending) at coverage p: the
 * ceil((N + 1) p)-th smallest; null when N is too small for p (that rank exceeds N).
 */
export function conformalQuantile(sortedScores: readonly number[], p: number): number | null {
  const n = sortedScores.length
  const rank = Math.ceil((n + 1) * p)
  return rank >= 1 && rank <= n ? sortedScores[rank - 1]! : null
}

export interface IntervalBounds {
  readonly method: IntervalMethod
  /** lower[levelKey][h], upper[levelKey][h]; levelKey is String(level). */
  readonly lower: Record<string, number[]>
  readonly upper: Record<string, number[]>
  /** quantiles[String(tau)][h] for each requested quantile. */
  readonly quantiles: Record<string, number[]>
  readonly clamped: boolean
  /** The forecast error's standard deviation per step 1..h (0 for method 'none'), widened as calibration widened the 95% band. */
  readonly sd: readonly number[]
}

export interface IntervalInput {
  readonly point: readonly number[]
  readonly levels: readonly number[]
  /** Quantiles in (0, 1) to report per step. */
  readonly quantiles?: readonly number[]
  /** Analytical variances for steps 1..h, when the model has them. */
  readonly variance?: readonly number[]
  /** In-sample one-step residuals (finite values only). */
  readonly residuals: readonly number[]
  readonly allowNegative: boolean
  /** Force 'none' (e.g. a constant history, where residuals say nothing about the future). */
  readonly none?: boolean
  /** Residual degrees of freedom of the fit (residual count minus parameters); absent: normal quantiles. */
  readonly degreesOfFreedom?: number
  /** Forecast errors at rolling origins inside the history (select/calibrate.ts). */
  readonly calibration?: readonly { readonly step: number; readonly error: number }[]
  /** Lower bound of sd per step (model uncertainty of short histories). */
  readonly floor?: readonly number[]
}

/** The model's own spread per step, by the rules in the module comment. */
export function modelSpread(
  horizon: number,
  variance: readonly number[] | undefined,
  residuals: readonly number[],
): { method: 'analytical' | 'empirical' | 'none'; sd: number[] } {
  if (variance && variance.length >= horizon && variance.slice(0, horizon).every((x) => Number.isFinite(x) && x >= 0)) {
    return { method: 'analytical', sd: variance.slice(0, horizon).map(Math.sqrt) }
  }
  if (residuals.length < 2) return { method: 'none', sd: new Array(horizon).fill(0) }
  const sigma1 = Math.sqrt(sum(residuals.map((e) => e * e)) / residuals.length)
  if (!Number.isFinite(sigma1)) return { method: 'none', sd: new Array(horizon).fill(0) }
  const sd = new Array<number>(horizon)
  for (let i = 0; i < horizon; i++) sd[i] = sigma1 * Math.sqrt(i + 1)
  return { method: 'empirical', sd }
}

/**
 * Fewest rolling origins for a calibrated interval; with fewer the model's spread stands.
 * With one origin the predictive t quantile below would have 1 degree of freedom (a
 * Cauchy law, 12.7 at 95%); from two on it is finite and its width says how little the
 * origins tell. Two origins rather than the earlier five errors: the short yearly
 * histories of the M3 training split (8 to 13 points) then get calibrated intervals too
 * (bench/RESULTS.md, "Yearly intervals").
 */
export const MIN_CALIBRATION_ORIGINS = 2

/** Standardised errors |error| / sd[step], ascending, each weighted 1 / (errors at its step). */
interface Scores {
  readonly values: readonly number[]
  readonly weights: readonly number[]
  /** Number of steps with errors (the sum of the weights). */
  readonly totalWeight: number
  /** Rolling origins behind the scores: each origin forecasts step 1, so the scores at step 1. */
  readonly origins: number
}

function standardised(errors: IntervalInput['calibration'], sd: readonly number[]): Scores | null {
  if (!errors) return null
  const perStep = new Map<number, number>()
  const kept: { z: number; step: number }[] = []
  for (const { step, error } of errors) {
    const s = sd[step - 1]
    if (s === undefined || !(s > 0) || !Number.isFinite(error / s)) continue
    kept.push({ z: Math.abs(error) / s, step })
    perStep.set(step, (perStep.get(step) ?? 0) + 1)
  }
  const origins = perStep.get(1) ?? 0
  if (origins < MIN_CALIBRATION_ORIGINS) return null
  kept.sort((a, b) => a.z - b.z)
  return { values: kept.map((k) => k.z), weights: kept.map((k) => 1 / perStep.get(k.step)!), totalWeight: perStep.size, origins }
}

/**
 * Weighted split-conformal quantile: each score weighs 1 / (scores at its step), so every
 * step counts once whatever its number of origins (near steps have the most); the
 * smallest score whose cumulative weight reaches p (total + largest weight), the weighted
 * form of ceil((N + 1) p) (Tibshirani, Barber, Candes & Ramdas 2019, from memory). Null
 * when no score reaches it.
 */
function weightedConformal(scores: Scores, p: number): number | null {
  let wMax = 0
  for (const w of scores.weights) wMax = Math.max(wMax, w)
  const target = p * (scores.totalWeight + wMax)
  let acc = 0
  for (let i = 0; i < scores.values.length; i++) {
    acc += scores.weights[i]!
    if (acc >= target - 1e-12) return scores.values[i]!
  }
  return null
}

/**
 * The multiplier k(p) of sd at central coverage p (0 < p < 1). Calibration only widens:
 * the rolling origins lie in the stretch the model was selected on, so their errors are
 * optimistic, and narrowing on them would promise too much.
 *
 * Where too few errors exist for p (the conformal rank lies past the largest score; with
 * the default five origins this is the rule at 95%), k is the predictive quantile of a new
 * score from a small normal sample with unknown spread:
 *   k = s * t_nu((1 + p) / 2),   s^2 = weighted mean of the squared scores,   nu = origins.
 * If the scores are N(0, c^2), a new score divided by s follows Student's t with nu degrees
 * of freedom (the mean is known to be 0, so none is spent on it): the classical
 * prediction interval for a future observation (Hahn & Meeker 1991, Statistical
 * Intervals, ch. 4; Geisser 1993, Predictive Inference; both from memory). nu counts
 * origins, not errors: the errors of one origin at its several steps share that fit's
 * level and slope mistakes, so they are one draw of the spread rather than several. With
 * few origins (short histories) the quantile is wide, as the conformal method, which gives
 * no finite bound there, says it should be. Never less than the largest score either: an
 * interval at a level the errors cannot resolve is at least as wide as the worst error
 * they showed (both decided on the M3 training split, bench/RESULTS.md).
 */
function multiplier(p: number, degreesOfFreedom: number | undefined, scores: Scores | null): number {
  const df = degreesOfFreedom
  const base = df !== undefined && df >= 1 ? studentQuantile(0.5 + p / 2, df) : normalQuantile(0.5 + p / 2)
  if (!scores) return base
  const q = weightedConformal(scores, p)
  if (q !== null) return Math.max(base, q)
  let ss = 0
  for (let i = 0; i < scores.values.length; i++) ss += scores.weights[i]! * scores.values[i]! ** 2
  const predictive = Math.sqrt(ss / scores.totalWeight) * studentQuantile(0.5 + p / 2, scores.origins)
  return Math.max(base, predictive, scores.values[scores.values.length - 1]!)
}

/** Bounds for every level and the requested quantiles; each interval contains its point and widens with level. */
export function buildIntervals(input: IntervalInput): IntervalBounds {
  const h = input.point.length
  const own = input.none ? { method: 'none' as const, sd: new Array<number>(h).fill(0) } : modelSpread(h, input.variance, input.residuals)
  let sd = own.sd
  const floor = input.floor
  if (own.method !== 'none' && floor) sd = sd.map((s, i) => (floor[i]! > s ? floor[i]! : s))
  const scores = own.method === 'none' ? null : standardised(input.calibration, sd)
  const method: IntervalMethod = scores ? 'calibrated' : own.method
  let clamped = false
  const value = (p: number, side: 1 | -1): number[] => {
    const k = p > 0 ? multiplier(p, input.degreesOfFreedom, scores) : 0
    return input.point.map((x, i) => {
      const v = x + side * k * sd[i]!
      if (!Number.isFinite(v)) return x
      if (!input.allowNegative && v < 0) {
        clamped = true
        return 0
      }
      return v
    })
  }
  const lower: Record<string, number[]> = {}
  const upper: Record<string, number[]> = {}
  for (const level of input.levels) {
    lower[String(level)] = value(level / 100, -1)
    upper[String(level)] = value(level / 100, 1)
  }
  const quantiles: Record<string, number[]> = {}
  for (const tau of input.quantiles ?? []) quantiles[String(tau)] = value(Math.abs(2 * tau - 1), tau < 0.5 ? -1 : 1)
  // The spread replenishment sizes safety stock with: the model's own, widened as the calibration
  // widened the 95% interval (so a safety stock at 95% agrees with the calibrated band).
  const widen = scores ? multiplier(0.95, input.degreesOfFreedom, scores) / normalQuantile(0.975) : 1
  return { method, lower, upper, quantiles, clamped, sd: sd.map((s) => s * widen) }
}
