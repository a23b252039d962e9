/**
 * h-step forecast-error variances of the state-space forms (Hyndman, Koehler, Ord and
 * Snyder 2008, chapter 6; equations from memory, checked against statsmodels and by
 * simulation in the tests). With c_j = alpha + beta (phi + ... + phi^j) + gamma [j mod m = 0]:
 *  - class 1 (additive error: A,N,N  A,A,N  A,Ad,N  A,N,A  A,A,A  A,Ad,A):
 *      v_h = sigma^2 (1 + sum_{j=1}^{h-1} c_j^2);
 *  - class 2 (multiplicative error, no season: M,N,N  M,A,N  M,Ad,N), with mu_h the point forecast:
 *      theta_1 = mu_1^2,  theta_h = mu_h^2 + sigma^2 sum_{j=1}^{h-1} c_j^2 theta_{h-j},
 *      v_h = (1 + sigma^2) theta_h - mu_h^2;
 *  - every other form (multiplicative error with a season): the sample variance of
 *    simulated future paths, y = mu (1 + eps), eps ~ N(0, sigma^2), from a fixed seed.
 */
import type { StateSpaceForm } from './forms.js'
import type { FilterRun, Weights } from './filter.js'
import { seededNormals } from './random.js'

export const SIMULATED_PATHS = 2000
const SEED = 20080101

function coefficients(form: StateSpaceForm, w: Weights, m: number, horizon: number): number[] {
  const c = new Array<number>(horizon).fill(0)
  const phi = form.trend === 'damped' ? w.phi : 1
  let phiSum = 0
  let power = 1
  for (let j = 1; j < horizon; j++) {
    power *= phi
    phiSum += power
    let v = w.alpha
    if (form.trend !== 'none') v += w.beta * phiSum
    if (form.season !== 'none' && j % m === 0) v += w.gamma
    c[j] = v
  }
  return c
}

/** Which of the three methods applies to a form. */
export function varianceMethod(form: StateSpaceForm): 'class-1' | 'class-2' | 'simulated' {
  if (form.error === 'add') return 'class-1'
  return form.season === 'none' ? 'class-2' : 'simulated'
}

/** `sigma2` is the filter's mean squared one-step error (run.variance). */
export function forecastVariances(
  form: StateSpaceForm,
  w: Weights,
  run: FilterRun,
  point: readonly number[],
  n: number,
): number[] {
  const horizon = point.length
  const sigma2 = run.variance
  const m = run.season.length
  const method = varianceMethod(form)
  if (method === 'simulated') return simulatedVariances(form, w, run, n, horizon)
  const c = coefficients(form, w, m, horizon)
  const out = new Array<number>(horizon)
  if (method === 'class-1') {
    let acc = 1
    for (let h = 1; h <= horizon; h++) {
      if (h > 1) acc += c[h - 1]! * c[h - 1]!
      out[h - 1] = sigma2 * acc
    }
    return out
  }
  const theta = new Array<number>(horizon)
  for (let h = 1; h <= horizon; h++) {
    const mu = point[h - 1]!
    let s = 0
    for (let j = 1; j < h; j++) s += c[j]! * c[j]! * theta[h - j - 1]!
    theta[h - 1] = mu * mu + sigma2 * s
    out[h - 1] = (1 + sigma2) * theta[h - 1]! - mu * mu
  }
  return out
}

/** Sample variances of `paths` simulated futures (exported for the tests' check of the class-2 formula). */
export function simulatedVariances(
  form: StateSpaceForm,
  w: Weights,
  run: FilterRun,
  n: number,
  horizon: number,
  paths = SIMULATED_PATHS,
): number[] {
  const normals = seededNormals(SEED)
  const sigma = Math.sqrt(run.variance)
  const m = run.season.length
  const phi = form.trend === 'damped' ? w.phi : 1
  const hasTrend = form.trend !== 'none'
  const sum = new Float64Array(horizon)
  const sumSq = new Float64Array(horizon)
  const season = new Float64Array(m)
  for (let path = 0; path < paths; path++) {
    let level = run.level
    let trend = hasTrend ? run.trend : 0
    for (let j = 0; j < m; j++) season[j] = run.season[j]!
    for (let h = 1; h <= horizon; h++) {
      const q = level + phi * trend
      const j = m > 0 ? (n + h - 1) % m : 0
      const s = m > 0 ? season[j]! : 0
      const mu = form.season === 'mul' ? q * s : q + s
      const y = mu * (1 + sigma * normals.next())
      const e = y - mu
      if (form.season === 'mul') {
        level = q + (w.alpha * e) / s
        if (hasTrend) trend = phi * trend + (w.beta * e) / s
        season[j] = s + (w.gamma * e) / q
      } else {
        level = q + w.alpha * e
        if (hasTrend) trend = phi * trend + w.beta * e
        if (m > 0) season[j] = s + w.gamma * e
      }
      sum[h - 1]! += y
      sumSq[h - 1]! += y * y
    }
  }
  const out = new Array<number>(horizon)
  for (let h = 0; h < horizon; h++) {
    const mean = sum[h]! / paths
    out[h] = Math.max(0, (sumSq[h]! - paths * mean * mean) / (paths - 1))
  }
  return out
}
