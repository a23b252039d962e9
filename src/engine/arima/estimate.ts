/**
 * Maximum-likelihood estimation of one seasonal ARIMA order on the differenced series w:
 *   phi(B) Phi(B^m) (w_t - mu) = theta(B) Theta(B^m) eps_t,  eps_t ~ N(0, sigma^2),
 * exact likelihood by kalman.ts, sigma^2 concentrated out, mu included only when the
 * total differencing d + D is at most 1 (a mean, or a drift of the undifferenced series;
 * Hyndman and Khandakar 2008). Parameters outside the stationary and invertible region
 * (polynomials.ts) are rejected; bounded Nelder-Mead from zero coefficients and the
 * sample mean, restarted from its own result while it improves.
 */
import { minimiseNelderMead } from '../optimise.js'
import { runArma, type ArmaRun } from './kalman.js'
import { expandAr, expandMa, rootsOutsideUnitCircle } from './polynomials.js'

export interface ArimaOrder {
  readonly p: number
  readonly d: number
  readonly q: number
  readonly P: number
  readonly D: number
  readonly Q: number
}

export interface ArmaCoefficients {
  readonly ar: readonly number[]
  readonly ma: readonly number[]
  readonly seasonalAr: readonly number[]
  readonly seasonalMa: readonly number[]
  /** Mean of w (0 when not included). */
  readonly mean: number
}

export interface ArmaEstimate {
  readonly order: ArimaOrder
  readonly includeMean: boolean
  readonly coefficients: ArmaCoefficients
  readonly run: ArmaRun
  readonly logLikelihood: number
  /** Coefficients + mean + sigma^2. */
  readonly parameterCount: number
  readonly aicc: number
}

function split(x: readonly number[], o: ArimaOrder, includeMean: boolean): ArmaCoefficients {
  let i = 0
  const take = (k: number): number[] => {
    const out = x.slice(i, i + k)
    i += k
    return out
  }
  const ar = take(o.p)
  const ma = take(o.q)
  const seasonalAr = take(o.P)
  const seasonalMa = take(o.Q)
  const mean = includeMean ? x[i]! : 0
  return { ar, ma, seasonalAr, seasonalMa, mean }
}

/** Filter run at given coefficients, or null outside the stationary/invertible region. */
export function runAt(w: readonly number[], c: ArmaCoefficients, m: number, predictions?: number[]): ArmaRun | null {
  if (!rootsOutsideUnitCircle(c.ar) || !rootsOutsideUnitCircle(c.seasonalAr)) return null
  if (!rootsOutsideUnitCircle(c.ma.map((v) => -v)) || !rootsOutsideUnitCircle(c.seasonalMa.map((v) => -v))) return null
  const centred = c.mean === 0 ? w : w.map((v) => v - c.mean)
  return runArma(centred, expandAr(c.ar, c.seasonalAr, m), expandMa(c.ma, c.seasonalMa, m), predictions)
}

export function estimateArma(w: readonly number[], order: ArimaOrder, m: number, includeMean: boolean): ArmaEstimate {
  const n = w.length
  let mean = 0
  for (const v of w) mean += v
  mean /= n
  let ss = 0
  for (const v of w) ss += (v - mean) * (v - mean)
  const sd = Math.max(Math.sqrt(ss / n), 1e-9 * Math.abs(mean), 1e-12)
  const k = order.p + order.q + order.P + order.Q
  const start = new Array<number>(k).fill(0)
  const lower = new Array<number>(k).fill(-2)
  const upper = new Array<number>(k).fill(2)
  if (includeMean) {
    start.push(mean)
    lower.push(mean - 2 * sd)
    upper.push(mean + 2 * sd)
  }
  const objective = (x: readonly number[]): number => {
    const run = runAt(w, split(x, order, includeMean), m)
    return run === null ? Infinity : -run.logLikelihood
  }
  let x = start
  if (start.length > 0) {
    const d = start.length
    let best = minimiseNelderMead(objective, start, lower, upper, { maxEvaluations: 100 * d, relTol: 1e-9, step: 0.05 })
    for (let r = 0; r < 2; r++) {
      const again = minimiseNelderMead(objective, best.x, lower, upper, { maxEvaluations: 60 * d, relTol: 1e-9, step: 0.02 })
      const gain = best.value - again.value
      if (again.value < best.value) best = again
      if (!(gain > 1e-8 * Math.abs(best.value) + 1e-10)) break
    }
    x = best.x
  }
  const coefficients = split(x, order, includeMean)
  const run = runAt(w, coefficients, m) ?? runArma(w, [], [])
  const parameterCount = start.length + 1
  const logLikelihood = run.logLikelihood
  const aicc = n - parameterCount - 1 > 0 && Number.isFinite(logLikelihood)
    ? -2 * logLikelihood + (2 * parameterCount * n) / (n - parameterCount - 1)
    : Infinity
  return { order, includeMean, coefficients, run, logLikelihood, parameterCount, aicc }
}
