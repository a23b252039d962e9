/**
 * Fitting an exponential-smoothing model: heuristic initial states (initial.ts),
 * then the smoothing parameters minimise the in-sample sum of squared one-step
 * errors with a bounded Nelder-Mead (optimise.ts), with the initial states estimated
 * too, as in the state-space approach of Hyndman, Koehler, Ord and Snyder (2008, ch. 5;
 * from memory):
 *  - Holt and damped Holt: the initial level and trend are profiled out of every
 *    evaluation (kernels.ts, sseTrendProfiled: exact least squares in one pass), so the
 *    search is over the joint optimum; a restarted short search follows;
 *  - seasonal models alternate: after the first search the states are re-estimated for
 *    the parameters found, exactly by least squares for additive seasonality
 *    (least-squares-states.ts), by a Gauss-Newton step for multiplicative seasonality
 *    (multiplicative-states.ts); then a short second search and a final re-estimate;
 *  - SES keeps level = y[0].
 * The series is divided by max|y| while optimising so tolerances are scale-free;
 * results are on the original scale.
 *
 * Search box (internal coordinates; common practice, phi range as Hyndman and
 * Athanasopoulos, FPP3 sec. 8.2, from memory):
 *   alpha in [1e-4, 0.9999]; beta in [1e-4, 0.9999] (component form, i.e.
 *   0 < betaE = alpha * beta < alpha); gamma = g * (1 - alpha), g in [1e-4, 0.9999]
 *   (so 0 < gamma < 1 - alpha); phi in [0.8, 0.98].
 */
import { EngineInputError } from '../errors.js'
import { minimiseNelderMead } from '../optimise.js'
import type { FitContext, ModelFit } from '../types.js'
import { initialLevel, initialLevelTrend, initialSeasonalStates } from './initial.js'
import { checkedScale, readParam, type SmoothingShape } from './input.js'
import { smoothingFit } from './fit-result.js'
import { sseLevel, sseSeasonalAdd, sseSeasonalMul, sseTrendProfiled } from './kernels.js'
import { leastSquaresStates, leastSquaresWorkspace } from './least-squares-states.js'
import { multiplicativeStates, multiplicativeWorkspace } from './multiplicative-states.js'

const LO = 1e-4
const HI = 0.9999
const PHI_LO = 0.8
const PHI_HI = 0.98
/** Objective evaluations per fit (common practice for small problems; keeps fits cheap). */
const MAX_EVALUATIONS = 150
/** First search of the additive models with re-estimated states, which a second search refines (measured: same SSE). */
const FIRST_SEARCH_EVALUATIONS = 80
/** Evaluations of the second search after re-estimated initial states. */
const REFINE_EVALUATIONS = 40
/** Gauss-Newton steps per re-estimate of multiplicative states (measured: more change little). */
const GAUSS_NEWTON_STEPS = 1

interface Buffers {
  /** The scaled series (n). */
  readonly y: Float64Array
  /** Seasonal scratch for the kernels (m, or empty without season). */
  readonly scratch: Float64Array
  /** Initial seasonal states (m, or empty). */
  readonly s0: Float64Array
  /** States [l, b, s...] from the state estimators (2 + m, or 2). */
  readonly lsStates: Float64Array
  readonly lsWork: Float64Array
}

/**
 * Buffers by (n, m, seasonal kind), reused by later fits of the same shape: a fresh
 * Float64Array of more than 8 elements is allocated off-heap by V8, at a cost comparable
 * to a whole SSE evaluation, and selection fits many models to series of one length.
 * Nothing a fit returns refers to them (smoothingFit copies what it keeps). The cache is
 * emptied when it holds many shapes or doubles; large buffers (long seasons, e.g. daily
 * data with m = 365) are not kept, their fit costs far more than the allocation.
 */
const bufferCache = new Map<string, Buffers>()
const BUFFER_SHAPES = 32
/** Doubles kept at most per cached shape and in all (64 Ki doubles = 512 KiB; 2 MiB). */
const BUFFER_KEEP = 1 << 16
const BUFFER_TOTAL = 1 << 18
let cachedDoubles = 0

function buffersFor(n: number, m: number, kind: 'add' | 'mul' | null): Buffers {
  const key = `${n}:${m}:${kind ?? ''}`
  const cached = bufferCache.get(key)
  if (cached) return cached
  const ms = kind ? m : 0
  const lsSize = kind === null ? 0 : kind === 'mul' ? multiplicativeWorkspace(m) : leastSquaresWorkspace(n, m)
  // Layout: y (n) | seasonal scratch (ms) | states [l, b, s...] (2 + ms) | LS states (2 + ms) | LS workspace.
  const work = new Float64Array(n + ms + 2 * (2 + ms) + lsSize)
  const buffers: Buffers = {
    y: work.subarray(0, n),
    scratch: work.subarray(n, n + ms),
    s0: work.subarray(n + ms + 2, n + ms + 2 + ms),
    lsStates: work.subarray(n + ms + 2 + ms, n + ms + 2 * (2 + ms)),
    lsWork: work.subarray(n + ms + 2 * (2 + ms)),
  }
  if (work.length > BUFFER_KEEP) return buffers
  if (bufferCache.size >= BUFFER_SHAPES || cachedDoubles + work.length > BUFFER_TOTAL) {
    bufferCache.clear()
    cachedDoubles = 0
  }
  bufferCache.set(key, buffers)
  cachedDoubles += work.length
  return buffers
}

/**
 * Fit one smoothing model. `ctx.initialParams` (levelWeight, trendWeight, seasonWeight,
 * damping), when given, is the optimiser's starting point. Returned params: levelWeight
 * (alpha), trendWeight (beta, component form, as statsmodels' smoothing_trend),
 * seasonWeight (gamma), damping (phi, damped models), startLevel, startTrend, startSeason
 * (m values; entry j applies to the first y[j]).
 * `fitted` is NaN only at index 0 of SES (its level starts at y[0]). `forecastVariance`
 * exists for the additive models only (class 1 of HKOS 2008), with sigma^2 = SSE / (n - k).
 * @throws EngineInputError on bad or short input (see checkedScale in input.ts), or when
 *   no parameters give a finite error sum
 */
export function fitSmoothing(shape: SmoothingShape, series: readonly number[], ctx: FitContext): ModelFit {
  const n = series.length
  const m = shape.seasonal ? ctx.seasonLength : 1
  const scale = checkedScale(shape, series, m)
  // Seasonal models re-estimate their initial states after the first search; the trend
  // models profile them out of every evaluation (sseTrendProfiled); SES starts at y[0].
  const refinable = shape.seasonal !== null
  const { y, scratch, s0, lsStates, lsWork } = buffersFor(n, m, shape.seasonal)
  for (let t = 0; t < n; t++) y[t] = series[t]! / scale

  // Initial states on the scaled series.
  let l0: number
  let b0 = 0
  if (shape.seasonal) {
    const init = initialSeasonalStates(y, m, shape.seasonal, s0, undefined, shape.trend !== 'none')
    l0 = init.level
    b0 = init.trend
  } else if (shape.trend !== 'none') {
    const init = initialLevelTrend(y)
    l0 = init.level
    b0 = init.trend
  } else l0 = initialLevel(y)

  // Internal coordinates: [alpha, beta?, g?, phi?].
  const hasTrend = shape.trend !== 'none'
  const damped = shape.trend === 'damped'
  const lower: number[] = [LO]
  const upper: number[] = [HI]
  const given = ctx.initialParams
  const a0 = readParam(given, 'levelWeight') ?? 0.3
  const start: number[] = [a0]
  if (hasTrend) {
    lower.push(LO)
    upper.push(HI)
    start.push(readParam(given, 'trendWeight') ?? 0.1)
  }
  if (shape.seasonal) {
    lower.push(LO)
    upper.push(HI)
    const g = readParam(given, 'seasonWeight')
    start.push(g !== undefined && a0 < 1 ? g / (1 - Math.min(a0, HI)) : 0.1)
  }
  if (damped) {
    lower.push(PHI_LO)
    upper.push(PHI_HI)
    start.push(readParam(given, 'damping') ?? 0.9)
  }
  const iB = hasTrend ? 1 : -1
  const iG = shape.seasonal ? (hasTrend ? 2 : 1) : -1
  const iP = damped ? start.length - 1 : -1
  const kind = shape.seasonal
  const objective = (x: readonly number[]): number => {
    const alpha = x[0]!
    const beta = iB >= 0 ? x[iB]! : 0
    const gamma = iG >= 0 ? x[iG]! * (1 - alpha) : 0
    const phi = iP >= 0 ? x[iP]! : 1
    if (kind === 'add') return sseSeasonalAdd(y, alpha, beta, gamma, phi, l0, b0, s0, scratch)
    if (kind === 'mul') return sseSeasonalMul(y, alpha, beta, gamma, phi, l0, b0, s0, scratch)
    if (hasTrend) return sseTrendProfiled(y, alpha, beta, phi)
    return sseLevel(y, alpha, l0, 1)
  }
  // Multiplicative models keep the full first search: 80 evaluations left AirPassengers'
  // damped fit 8% above statsmodels' SSE (test/engine/smoothing/models.test.ts).
  // Seasonal models without trend search two parameters: half the evaluations.
  const twoParameters = !hasTrend && kind !== null
  const firstCap = twoParameters
    ? FIRST_SEARCH_EVALUATIONS / 2
    : kind === 'add' || (kind === null && hasTrend) ? FIRST_SEARCH_EVALUATIONS : MAX_EVALUATIONS
  let best = minimiseNelderMead(objective, start, lower, upper, { maxEvaluations: firstCap })
  if (!Number.isFinite(best.value) && kind === 'mul') {
    // A steep heuristic trend (e.g. after an outlier in the first season) can drive the
    // multiplicative base below zero for every parameter: retry from a flat trend.
    let first = 0
    for (let j = 0; j < m; j++) first += y[j]!
    l0 = l0 > 0 ? l0 : first / m
    b0 = 0
    best = minimiseNelderMead(objective, start, lower, upper, { maxEvaluations: MAX_EVALUATIONS })
  }
  // Skipped when the fit is already exact (RMS error below 1e-10 of max|y|).
  if (refinable && Number.isFinite(best.value) && best.value > 1e-20 * n) {
    // Replace the heuristic start by states estimated for the parameters found, search
    // again from there, and re-estimate the states once more.
    const refine = (x: readonly number[]): boolean => {
      const a = x[0]!
      const beta = iB >= 0 ? x[iB]! : 0
      const gamma = iG >= 0 ? x[iG]! * (1 - a) : 0
      const phi = iP >= 0 ? x[iP]! : 1
      let ok: boolean
      if (kind === 'mul') {
        lsStates[0] = l0
        lsStates[1] = b0
        lsStates.set(s0, 2)
        ok = Number.isFinite(multiplicativeStates(y, a, beta, gamma, phi, hasTrend, GAUSS_NEWTON_STEPS, lsWork, lsStates))
      } else ok = leastSquaresStates(y, a, beta, gamma, phi, hasTrend, m, lsWork, lsStates)
      if (!ok) return false
      const keepL = l0
      const keepB = b0
      l0 = lsStates[0]!
      b0 = lsStates[1]!
      scratch.set(s0) // scratch is free between evaluations
      s0.set(lsStates.subarray(2))
      if (objective(x) < best.value) return true
      l0 = keepL
      b0 = keepB
      s0.set(scratch)
      return false
    }
    if (refine(best.x)) {
      // The search starts at best.x, so it cannot end worse than the refined start.
      best = minimiseNelderMead(objective, best.x, lower, upper, { maxEvaluations: twoParameters ? REFINE_EVALUATIONS / 2 : REFINE_EVALUATIONS, step: 0.05 })
      refine(best.x)
    }
  }
  if (hasTrend && !kind && Number.isFinite(best.value)) {
    // A restarted search with a fresh small simplex (the first can stall along a bound).
    best = minimiseNelderMead(objective, best.x, lower, upper, { maxEvaluations: REFINE_EVALUATIONS, step: 0.05 })
    sseTrendProfiled(y, best.x[0]!, iB >= 0 ? best.x[iB]! : 0, iP >= 0 ? best.x[iP]! : 1, lsStates)
    l0 = lsStates[0]!
    b0 = lsStates[1]!
  }
  if (!Number.isFinite(best.value)) {
    throw new EngineInputError('non-finite-value', `${shape.name} found no parameters with a finite error sum for this series`)
  }
  const alpha = best.x[0]!
  const beta = iB >= 0 ? best.x[iB]! : 0
  const gamma = iG >= 0 ? best.x[iG]! * (1 - alpha) : 0
  const phi = iP >= 0 ? best.x[iP]! : 1
  return smoothingFit(shape, series, y, scale, m, { alpha, beta, gamma, phi, level: l0, trend: b0, seasonal: s0 })
}
