/**
 * The innovations filter of the exponential smoothing state-space family (Hyndman,
 * Koehler, Ord and Snyder 2008, table 2.2), in error-correction form. With
 *   q_t = l_{t-1} + phi b_{t-1}                     (phi = 1 undamped; b = 0 without trend)
 *   mu_t = q_t, q_t + s_{t-m} or q_t s_{t-m}         (season none, additive, multiplicative)
 *   e_t = y_t - mu_t                                 (the one-step forecast error)
 * the state updates are, for additive season or none,
 *   l_t = q_t + alpha e_t,  b_t = phi b_{t-1} + beta e_t,  s_t = s_{t-m} + gamma e_t
 * and for multiplicative season
 *   l_t = q_t + alpha e_t / s_{t-m},  b_t = phi b_{t-1} + beta e_t / s_{t-m},  s_t = s_{t-m} + gamma e_t / q_t.
 * Written with e_t these hold for both error kinds: the multiplicative-error equations of
 * table 2.2 (e.g. l_t = q_t (1 + alpha eps_t), eps_t = e_t / mu_t) reduce to the same
 * updates. The error kind changes only the likelihood (HKOS 2008, section 5.1):
 *   additive:        log L = -n/2 (log(2 pi SSE / n) + 1)
 *   multiplicative:  log L = -n/2 (log(2 pi sum(eps_t^2) / n) + 1) - sum log mu_t
 * (sigma^2 concentrated out; statsmodels ETSModel.loglike documents the same expression).
 */
import type { StateSpaceForm } from './forms.js'

export interface Weights {
  readonly alpha: number
  readonly beta: number
  readonly gamma: number
  /** 1 when the trend is not damped. */
  readonly phi: number
}

export interface InitialStates {
  readonly level: number
  readonly trend: number
  /** m values in time order: season[j] applies to observation j (j < m). Empty without season. */
  readonly season: readonly number[]
}

export interface FilterRun {
  /** Concentrated log-likelihood; -Infinity when a multiplicative form leaves positive territory. */
  readonly logLikelihood: number
  /** Mean squared one-step error: e_t for additive error, e_t / mu_t for multiplicative. */
  readonly variance: number
  readonly level: number
  readonly trend: number
  /** Final seasonal states by position: season[j] applies to every time t with t mod m = j. */
  readonly season: number[]
}

/**
 * Runs the filter over `series`; writes one-step forecasts into `fitted` when given.
 * O(n). Pure apart from `fitted`.
 */
export function runFilter(
  form: StateSpaceForm,
  series: readonly number[],
  w: Weights,
  init: InitialStates,
  fitted?: number[],
): FilterRun {
  const n = series.length
  const m = init.season.length
  const season = init.season.slice()
  const hasTrend = form.trend !== 'none'
  const phi = form.trend === 'damped' ? w.phi : 1
  const multiplicativeError = form.error === 'mul'
  let level = init.level
  let trend = hasTrend ? init.trend : 0
  let sumSquares = 0
  let sumLogMu = 0
  let ok = true
  for (let t = 0; t < n; t++) {
    const q = level + phi * trend
    const j = m > 0 ? t % m : 0
    let mu: number
    let s = 0
    if (form.season === 'add') {
      s = season[j]!
      mu = q + s
    } else if (form.season === 'mul') {
      s = season[j]!
      mu = q * s
    } else {
      mu = q
    }
    if (fitted) fitted[t] = mu
    const e = series[t]! - mu
    if (multiplicativeError) {
      if (!(mu > 0)) {
        ok = false
        break
      }
      const eps = e / mu
      sumSquares += eps * eps
      sumLogMu += Math.log(mu)
    } else {
      sumSquares += e * e
    }
    if (form.season === 'mul') {
      if (!(s > 0) || !(q > 0)) {
        ok = false
        break
      }
      level = q + (w.alpha * e) / s
      if (hasTrend) trend = phi * trend + (w.beta * e) / s
      season[j] = s + (w.gamma * e) / q
    } else {
      level = q + w.alpha * e
      if (hasTrend) trend = phi * trend + w.beta * e
      if (form.season === 'add') season[j] = s + w.gamma * e
    }
  }
  const variance = sumSquares / n
  // An exact fit (a constant series) gets a tiny floor, so the likelihood stays finite
  // and AICc still prefers the form with fewer parameters.
  let logLikelihood = -Infinity
  if (ok) logLikelihood = (-n / 2) * (Math.log(2 * Math.PI * Math.max(variance, 1e-300)) + 1) - sumLogMu
  if (!Number.isFinite(level) || !Number.isFinite(trend)) logLikelihood = -Infinity
  return { logLikelihood, variance, level, trend, season }
}

/**
 * Point forecasts from the final states: (l_n + phi_h b_n) (op) s, phi_h = phi + ... + phi^h,
 * with the seasonal state of the forecast period's position (HKOS 2008, table 2.1).
 */
export function pointForecasts(form: StateSpaceForm, run: FilterRun, n: number, phi: number, horizon: number): number[] {
  const out = new Array<number>(horizon)
  const m = run.season.length
  const damping = form.trend === 'damped' ? phi : 1
  let phiSum = 0
  let power = 1
  for (let h = 1; h <= horizon; h++) {
    power *= damping
    phiSum += power
    const q = run.level + (form.trend === 'none' ? 0 : phiSum * run.trend)
    const s = m > 0 ? run.season[(n + h - 1) % m]! : 0
    out[h - 1] = form.season === 'add' ? q + s : form.season === 'mul' ? q * s : q
  }
  return out
}
