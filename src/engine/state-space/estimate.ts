/**
 * Maximum-likelihood estimation of one state-space form (Hyndman, Koehler, Ord and
 * Snyder 2008, chapter 5): the concentrated log-likelihood of filter.ts is maximised
 * jointly over the weights and the initial states by a bounded Nelder-Mead search,
 * restarted from its own result until it stops improving (a restart rebuilds the
 * simplex, the usual remedy for Nelder-Mead stalling in many dimensions).
 *
 * Parameter region: the "usual" one, as statsmodels ETSModel by default,
 *   0 < alpha < 1,  0 < beta < alpha,  0 < gamma < 1 - alpha,  0.8 <= phi <= 0.98,
 * searched as alpha, beta* = beta / alpha, gamma* = gamma / (1 - alpha) in
 * [1e-4, 1 - 1e-4] so that the region is a box. Seasonal states: m - 1 are free; the
 * last makes them sum to 0 (additive) or m (multiplicative), which loses nothing
 * because the level absorbs the difference.
 */
import { minimiseNelderMead, type NelderMeadResult } from '../optimise.js'
import { freeParameterCount, type StateSpaceForm } from './forms.js'
import { runFilter, type FilterRun, type InitialStates, type Weights } from './filter.js'
import { heuristicStates } from './initial.js'

const LOW = 1e-4
const HIGH = 1 - 1e-4
const MAX_RESTARTS = 2
/** Searches started from the best points of the weight grid below. */
const STARTS = 2

/**
 * The weights of the `STARTS` best points of a small grid (alpha, beta*, phi, gamma*),
 * the initial states left at their heuristic values: the likelihood surface often has
 * more than one basin (e.g. alpha and beta near 1 on short trending series).
 */
function gridStarts(start: readonly number[], lay: Layout, objective: (x: readonly number[]) => number): number[][] {
  const alphas = [0.1, 0.5, 0.9, 0.999]
  const betas = lay.trend ? [0.05, 0.5, 0.999] : [NaN]
  const phis = lay.damped ? [0.85, 0.97] : [NaN]
  const gammas = lay.season ? [0.05, 0.5] : [NaN]
  const scored: { x: number[]; value: number }[] = []
  for (const a of alphas) {
    for (const b of betas) {
      for (const p of phis) {
        for (const g of gammas) {
          const x = start.slice()
          const weights = [a]
          if (lay.trend) weights.push(b)
          if (lay.damped) weights.push(p)
          if (lay.season) weights.push(g)
          weights.forEach((v, i) => (x[i] = v))
          const v = objective(x)
          scored.push({ x, value: Number.isFinite(v) ? v : Infinity })
        }
      }
    }
  }
  scored.sort((p, q) => p.value - q.value)
  return [start.slice(), ...scored.slice(0, STARTS - 1).map((s) => s.x)]
}

export interface FormEstimate {
  readonly form: StateSpaceForm
  readonly weights: Weights
  readonly initial: InitialStates
  readonly run: FilterRun
  readonly logLikelihood: number
  /** Free parameters including the error variance. */
  readonly parameterCount: number
  /** -2 log L + 2 k n / (n - k - 1); Infinity when n <= k + 1. */
  readonly aicc: number
}

export function aiccOf(logLikelihood: number, n: number, k: number): number {
  if (n - k - 1 <= 0 || !Number.isFinite(logLikelihood)) return Infinity
  return -2 * logLikelihood + (2 * k * n) / (n - k - 1)
}

interface Layout {
  readonly trend: boolean
  readonly damped: boolean
  readonly season: boolean
  readonly m: number
}

function decode(x: readonly number[], form: StateSpaceForm, lay: Layout): { weights: Weights; initial: InitialStates } {
  let i = 0
  const alpha = x[i++]!
  const beta = lay.trend ? alpha * x[i++]! : 0
  const phi = lay.damped ? x[i++]! : 1
  const gamma = lay.season ? (1 - alpha) * x[i++]! : 0
  const level = x[i++]!
  const trend = lay.trend ? x[i++]! : 0
  const season: number[] = []
  if (lay.season) {
    let total = 0
    for (let j = 0; j < lay.m - 1; j++) {
      const v = x[i++]!
      season.push(v)
      total += v
    }
    season.push(form.season === 'mul' ? lay.m - total : -total)
  }
  return { weights: { alpha, beta, gamma, phi }, initial: { level, trend, season } }
}

/** Evaluates one form at given weights and initial states (used by the tests against statsmodels too). */
export function evaluateForm(
  form: StateSpaceForm,
  series: readonly number[],
  weights: Weights,
  initial: InitialStates,
  fitted?: number[],
): FormEstimate {
  const run = runFilter(form, series, weights, initial, fitted)
  const k = freeParameterCount(form, initial.season.length)
  return {
    form,
    weights,
    initial,
    run,
    logLikelihood: run.logLikelihood,
    parameterCount: k,
    aicc: aiccOf(run.logLikelihood, series.length, k),
  }
}

export function estimateForm(form: StateSpaceForm, series: readonly number[], seasonLength: number): FormEstimate {
  const m = form.season === 'none' ? 0 : seasonLength
  const lay: Layout = { trend: form.trend !== 'none', damped: form.trend === 'damped', season: m > 0, m }
  const start0 = heuristicStates(form, series, seasonLength)
  let mean = 0
  for (const v of series) mean += v
  mean /= series.length
  let ss = 0
  for (const v of series) ss += (v - mean) * (v - mean)
  const spread = Math.max(Math.sqrt(ss / series.length), 1e-6 * Math.abs(mean), 1e-9)

  const start: number[] = []
  const lower: number[] = []
  const upper: number[] = []
  const push = (v: number, lo: number, hi: number): void => {
    start.push(Math.min(hi, Math.max(lo, v)))
    lower.push(lo)
    upper.push(hi)
  }
  push(0.2, LOW, HIGH)
  if (lay.trend) push(0.1, LOW, HIGH)
  if (lay.damped) push(0.95, 0.8, 0.98)
  if (lay.season) push(0.05, LOW, HIGH)
  push(start0.level, start0.level - 2 * spread, start0.level + 2 * spread)
  if (lay.trend) {
    const width = Math.max(Math.abs(start0.trend), spread / 4)
    push(start0.trend, start0.trend - 2 * width, start0.trend + 2 * width)
  }
  for (let j = 0; j < m - 1; j++) {
    const s = start0.season[j]!
    if (form.season === 'mul') push(s, 0.1 * s, 2 * s + 0.1)
    else push(s, s - 2 * spread, s + 2 * spread)
  }

  const objective = (x: readonly number[]): number => {
    const { weights, initial } = decode(x, form, lay)
    return -runFilter(form, series, weights, initial).logLikelihood
  }
  const d = start.length
  let best: NelderMeadResult | undefined
  for (const from of gridStarts(start, lay, objective)) {
    let run = minimiseNelderMead(objective, from, lower, upper, { maxEvaluations: 40 * d, relTol: 1e-10, step: 0.1 })
    for (let r = 0; r < MAX_RESTARTS; r++) {
      const again = minimiseNelderMead(objective, run.x, lower, upper, { maxEvaluations: 30 * d, relTol: 1e-10, step: 0.05 })
      const gain = run.value - again.value
      if (again.value < run.value) run = again
      if (!(gain > 1e-7 * Math.abs(run.value) + 1e-9)) break
    }
    if (best === undefined || run.value < best.value) best = run
  }
  const { weights, initial } = decode(best!.x, form, lay)
  return evaluateForm(form, series, weights, initial)
}
