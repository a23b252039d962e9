/**
 * forecastSeries: prepare, choose candidates, score them on a holdout, refit the best
 * three on the whole history, keep the one with the lowest AICc (shortlist.ts), or the
 * shortlist's mean when it scores no worse on the same holdout (combine.ts), forecast.
 * The candidates list the refitted shortlist first, in that final order (after the mean
 * when the mean was chosen, before it otherwise), then the other candidates by holdout
 * score.
 *
 * Flat histories (constant or all zero) get the last-value method's flat line with
 * intervals of zero width (method 'none'), no model choice (method 'none', holdoutPeriods 0,
 * holdoutOrigins 0) and no candidates: every candidate would forecast the same line.
 *
 * When the history is too short for a holdout (no candidate other than last-value can be
 * trained on the training part), candidates are ranked by in-sample one-step errors
 * instead (method 'in-sample', with a warning): this favours flexible models, so it is
 * a last resort.
 */
import { EngineInputError } from '../errors.js'
import { MODEL_REGISTRY, classifyDemand, type DemandClassification } from '../models.js'
import { prepareSeries, type PreparedSeries } from '../prepare.js'
import type { EngineWarning, ForecastResult, ModelFit, ModelSpec, SeriesInput } from '../types.js'
import { assembleResult, inSampleResiduals, naiveWinner, type SelectionSummary, type Winner } from './assemble.js'
import { candidateModels, lengthReason, requiredLength, structuralReason } from './candidates.js'
import { checkedForecast, evaluateHoldout, evaluateInSample, skipped, withIntervalScores, type Evaluation } from './evaluate.js'
import { MIN_TRAINING, planHoldout } from './holdout.js'
import { rankEvaluations, shortlistFirst } from './rank.js'
import { seasonalityVerdict, type SeasonalityVerdict } from './seasonality.js'
import { isSeasonalFit, orderByCriterion, parameterCount, SHORTLIST_SIZE } from './shortlist.js'
import { calibrationErrors, type CalibrationBudget } from './calibrate.js'
import { combinedHoldout } from './combine.js'
import { combineFits, COMBINATION_FAMILY, SHORTLIST_COMBINATION } from '../combination/shortlist-combination.js'
import { LISTABLE_MODELS, SEARCH, THOROUGH_EXTRA } from './pools.js'
import { SHORT_HISTORY } from '../prepare.js'
import { modelSpread } from '../intervals.js'

export interface EngineModels {
  readonly registry: readonly ModelSpec[]
  readonly classify: ((series: readonly number[]) => DemandClassification) | null
  /** Models the thorough search adds (select/pools.ts). */
  readonly thoroughExtra?: readonly ModelSpec[]
  /** Models a request may name in `models` (default: the registry and the thorough extras). */
  readonly listable?: readonly ModelSpec[]
  /** Seasonality pre-test for the default pool ('none' excludes seasonal models); null: every seasonal model is tried. */
  readonly seasonalityTest: ((series: readonly number[], seasonLength: number) => SeasonalityVerdict) | null
  /** Offer the shortlist's mean as a candidate (select/combine.ts); absent: not offered. */
  readonly combineShortlist?: boolean
}

const DEFAULT_MODELS: EngineModels = {
  registry: MODEL_REGISTRY,
  thoroughExtra: THOROUGH_EXTRA,
  listable: LISTABLE_MODELS,
  classify: classifyDemand,
  seasonalityTest: seasonalityVerdict,
  combineShortlist: true,
}

/**
 * Seasonal models join the default pool unless the history shows no sign of seasonality
 * at lag m (seasonality.ts: 'clear' and 'doubt' let them in; in doubt the holdout and the
 * AICc shortlist decide). Without any test, on a plain trend the seasonal models fit the
 * noise and win about a quarter of the holdout comparisons in our seeded trials. Listing
 * `models` skips the test.
 */
function seasonalExclusion(prep: PreparedSeries, models: EngineModels): string | null {
  const m = prep.seasonLength
  if (prep.models !== undefined || m < 2 || !models.seasonalityTest) return null
  // Below two seasons no test can show a season: the length rule's reason says what is missing.
  if (prep.values.length < 2 * m) return null
  return models.seasonalityTest(prep.values, m) !== 'none'
    ? null
    : `no sign of seasonality at lag ${m} (autocorrelation and Kruskal-Wallis tests on the detrended history)`
}

function flatResult(prep: PreparedSeries, warnings: EngineWarning[]): ForecastResult {
  const v = prep.values[0]
  warnings.push({
    code: prep.flat === 'all-zero' ? 'all-zero-series' : 'constant-series',
    message:
      prep.flat === 'all-zero'
        ? 'the history is all zero: forecasting zero, no model selection and no interval spread'
        : `the history is constant (${v}): forecasting that value, no model selection and no interval spread`,
  })
  return assembleResult(
    prep,
    naiveWinner(prep.values, prep.horizon),
    { method: 'none', rankBy: prep.rankBy, holdoutPeriods: 0, holdoutOrigins: 0, holdoutErrors: null, candidates: [] },
    warnings,
    true,
  )
}

/** Intermittent or lumpy demand: average inter-demand interval above 1.32 (Syntetos & Boylan 2005). */
function isIntermittent(prep: PreparedSeries, models: EngineModels, warnings: EngineWarning[]): boolean {
  if (!models.classify || prep.values.some((v) => v < 0)) return false
  let c: DemandClassification
  try {
    c = models.classify(prep.values)
  } catch {
    return false // fewer than 2 demands: nothing to classify
  }
  if (c.demandClass !== 'intermittent' && c.demandClass !== 'lumpy') return false
  warnings.push({
    code: 'intermittent-demand',
    message:
      `demand is ${c.demandClass} (ADI ${c.adi.toFixed(2)}, CV² ${c.cv2.toFixed(2)})` +
      (prep.models === undefined ? '; candidates limited to the intermittent-demand methods (croston, croston-bias-corrected)' : ''),
  })
  return true
}

/** Whether some candidate beyond last-value (or last-value, when it is the only one) can train on `length` points. */
function canTrain(specs: readonly ModelSpec[], prep: PreparedSeries, length: number): boolean {
  if (length < MIN_TRAINING) return false
  return specs.some(
    (s) =>
      (s.name !== 'last-value' || specs.length === 1) &&
      structuralReason(s, prep.seasonLength, prep.values) === null &&
      lengthReason(s, prep.seasonLength, length, true) === null,
  )
}

/**
 * The last-value method's spread per step, sigma_1 sqrt(h) with sigma_1 the root mean square
 * of its one-step errors: the floor of the intervals (model uncertainty, see needsFloor).
 * Empty below 2 points.
 */
function naiveSpread(values: readonly number[], horizon: number): number[] | undefined {
  if (values.length < 2) return undefined
  let ss = 0
  for (let t = 1; t < values.length; t++) ss += (values[t]! - values[t - 1]!) ** 2
  const sigma = Math.sqrt(ss / (values.length - 1))
  return Array.from({ length: horizon }, (_, i) => sigma * Math.sqrt(i + 1))
}

/**
 * Whether the winner's intervals get the last-value method's spread as a floor (model
 * uncertainty: an interval should also cover the models the data cannot reject; Chatfield
 * 1996, "Model uncertainty and forecast accuracy", J. Forecasting 15, from memory):
 * - histories shorter than SHORT_HISTORY, where the data cannot show that any model beats
 *   the last value;
 * - trend winners (family 'trend': a line, Holt's trend, Theta) on histories without a
 *   season: a few dozen yearly points cannot tell a deterministic trend from a random walk
 *   (unit-root tests have little power on short series; DeJong, Nankervis, Savin &
 *   Whiteman 1992, J. Econometrics 53, from memory), while the trend's own interval assumes
 *   the slope goes on. On the M3 training split this raised yearly 95% coverage from 0.885
 *   to 0.909. With a season (quarterly, monthly) the trend winners' intervals already held
 *   their level there, and the floor only pushed the 80% intervals past it (monthly cov80
 *   0.830 -> 0.862, quarterly 0.800 -> 0.829), so it stays off (bench/RESULTS.md, "Yearly
 *   intervals").
 */
function needsFloor(n: number, family: ModelSpec['family'], seasonLength: number): boolean {
  return n < SHORT_HISTORY || (family === 'trend' && seasonLength <= 1)
}

/** The pick's calibration errors and floor: what its bands are built from, whether centred on it or on the mean. */
function pickBands(
  spec: ModelSpec,
  pick: Winner,
  values: readonly number[],
  m: number,
  horizon: number,
  budget: CalibrationBudget,
): Pick<Winner, 'calibration' | 'floor'> {
  return {
    calibration: calibrationErrors(spec, values, m, horizon, pick.params, budget),
    floor: needsFloor(values.length, spec.family, m) ? naiveSpread(values, horizon) : undefined,
  }
}

/**
 * The shortlist's combination as the winner (select/combine.ts): its point forecast and
 * fitted values are the mean of the members' refits; its bands are the AICc pick's,
 * calibrated as that pick's would be, centred on the mean. Null when the pick has no spread
 * to lend (too few residuals): the pick stands then.
 *
 * Why the pick's bands rather than a calibration of the mean itself: decided on the M3
 * training split (bench/RESULTS.md, "Combining the shortlist"). Calibrating the mean at the
 * rolling origins (every member refitted there) gave wider 80% bands (coverage 0.820 against
 * 0.810 at the 0.80 level, monthly 0.848 against 0.834) and a worse MSIS (14.89 against
 * 14.49), at three times the calibration fits: the mean's own spread (the members' spreads
 * averaged) is wider than the pick's, and calibration only widens (intervals.ts). The mean's
 * errors are on average no larger than the pick's, which is what combining is for.
 */
function combinedWinner(
  pick: Winner,
  pickSpec: ModelSpec,
  members: readonly ModelFit[],
  values: readonly number[],
  m: number,
  horizon: number,
  budget: CalibrationBudget,
): Winner | null {
  const spread = modelSpread(horizon, pick.variance, inSampleResiduals(values, pick.fitted))
  if (spread.method === 'none') return null
  const fit = combineFits(members, values)
  return {
    model: SHORTLIST_COMBINATION,
    family: COMBINATION_FAMILY,
    params: fit.params,
    fitted: fit.fitted,
    point: checkedForecast(fit, horizon),
    variance: spread.sd.map((sd) => sd * sd),
    degreesOfFreedom: pick.degreesOfFreedom,
    ...pickBands(pickSpec, pick, values, m, horizon, budget),
  }
}

export function forecastSeriesWith(input: SeriesInput, models: EngineModels): ForecastResult {
  const prep = prepareSeries(input)
  const warnings: EngineWarning[] = [...prep.warnings]
  if (prep.flat) return flatResult(prep, warnings)

  const n = prep.values.length
  const m = prep.seasonLength
  const intermittent = isIntermittent(prep, models, warnings)
  // Listed models are fitted whatever the search; unlisted, thorough adds its extra pool to the default.
  const registry =
    prep.models !== undefined && models.listable
      ? models.listable
      : prep.modelSearch === 'thorough' && models.thoroughExtra
        ? [...models.registry, ...models.thoroughExtra]
        : models.registry
  const listed = prep.models?.filter((name) => name !== SHORTLIST_COMBINATION)
  const { specs, unavailable } = candidateModels(registry, listed, intermittent, m)
  if (unavailable.length > 0) {
    warnings.push({ code: 'model-unavailable', message: `not available in this build: ${unavailable.join(', ')}` })
  }
  if (specs.length === 0) throw new EngineInputError('invalid-option', 'none of the requested models is available', 'models')

  const noSeason = seasonalExclusion(prep, models)
  const active = specs.filter((s) => !(noSeason && s.seasonal))
  const requirements = active
    .filter((s) => structuralReason(s, m, prep.values) === null)
    .map((s) => requiredLength(s, m))
  const plan = planHoldout(n, prep.horizon, m, prep.holdoutPeriods, prep.holdoutOrigins, requirements)
  const holdoutCut = prep.holdoutPeriods !== undefined && plan.holdout < prep.holdoutPeriods
  if (plan.reduced && (holdoutCut || plan.origins < prep.requestedOrigins)) {
    warnings.push({
      code: 'holdout-reduced',
      message: `holdoutPeriods/holdoutOrigins reduced to ${plan.holdout}/${plan.origins} to leave at least ${MIN_TRAINING} training periods`,
    })
  }
  const evaluate = (score: (s: ModelSpec) => Evaluation): Evaluation[] =>
    specs.map((s) => (noSeason && s.seasonal ? skipped(s, noSeason) : score(s)))
  let method: 'holdout' | 'in-sample' = canTrain(active, prep, n - plan.holdout - (plan.origins - 1)) ? 'holdout' : 'in-sample'
  let evaluations: Evaluation[] =
    method === 'holdout' ? evaluate((s) => evaluateHoldout(s, prep.values, m, plan.holdout, plan.origins)) : []
  if (method === 'holdout' && evaluations.every((e) => e.metrics === undefined)) method = 'in-sample'
  if (method === 'in-sample') {
    evaluations = evaluate((s) => evaluateInSample(s, prep.values, m))
    warnings.push({
      code: 'ranked-in-sample',
      message: `history of ${n} periods is too short for a holdout; models were ranked by in-sample one-step errors`,
    })
  }
  if (SEARCH[prep.modelSearch].intervalScoresForAll) evaluations = evaluations.map(withIntervalScores)
  const ranking = rankEvaluations(specs, evaluations, prep.rankBy)
  if (ranking.order.length === 0) {
    // Report a length problem if there is one (more data helps); else every reason.
    const reasons = evaluations.map((e) => `${e.entry.model} ${e.entry.reason ?? 'could not be fitted'}`)
    const short = reasons.find((r) => / needs \d+ periods/.test(r))
    if (short) throw new EngineInputError('series-too-short', reasons.length > 1 ? `no model fits: ${short}` : short, 'demand')
    throw new EngineInputError('invalid-option', `no requested model fits this series: ${reasons.join('; ')}`, 'models')
  }
  if (ranking.fellBack) {
    warnings.push({
      code: 'rank-by-undefined',
      message: `${prep.rankBy} is undefined for this history (e.g. zero scale); models were ranked by mae`,
    })
  }

  // Refit the best candidates on the whole history: the first SHORTLIST_SIZE that refit
  // (holdout selection), or only the first (in-sample selection); then pick by AICc.
  const want = method === 'holdout' ? SHORTLIST_SIZE : 1
  const refits: { index: number; winner: Winner; complexity: number; fit: ModelFit }[] = []
  const residualCount = (fitted: readonly number[]): number => fitted.reduce((c, f) => (Number.isFinite(f) ? c + 1 : c), 0)
  for (const i of ranking.order) {
    if (refits.length >= want) break
    const spec = specs[i]!
    try {
      const fit = spec.fit(prep.values, { seasonLength: m, initialParams: evaluations[i]!.params })
      const point = checkedForecast(fit, prep.horizon)
      const variance = fit.forecastVariance?.(prep.horizon)
      const complexity = parameterCount(spec, fit.params, m)
      const fitted = fit.fitted
      refits.push({
        index: i,
        fit,
        complexity,
        winner: {
          model: spec.name, family: spec.family, params: fit.params, fitted, point, variance,
          degreesOfFreedom: residualCount(fitted) - complexity,
        },
      })
    } catch (err) {
      const why = err instanceof Error ? err.message : String(err)
      warnings.push({ code: 'refit-failed', message: `${spec.name} failed on the full history (${why}); next candidate used` })
    }
  }
  const finalOrder = orderByCriterion(prep.values, refits.map((r) => ({ fitted: r.winner.fitted, complexity: r.complexity })))
  const shortlist = finalOrder.map((k) => refits[k]!)
  const chosen = shortlist[0]
  // The chosen model's interval measures (every candidate's with modelSearch thorough, above).
  const winnerEval: Evaluation | undefined = chosen ? withIntervalScores(evaluations[chosen.index]!) : undefined
  const rows = winnerEval ? ranking.candidates.map((c) => (c.model === winnerEval.entry.model && c.status === 'scored' ? { ...c, holdoutErrors: winnerEval.metrics } : c)) : ranking.candidates
  let candidates = shortlistFirst(rows, shortlist.map((r) => specs[r.index]!.name))
  let holdoutErrors = winnerEval?.metrics ?? null
  let winner: Winner
  let members: SelectionSummary['members']
  if (!chosen) {
    warnings.push({ code: 'fallback-last-value', message: 'no candidate could be refitted on the full history; last-value forecast used' })
    winner = naiveWinner(prep.values, prep.horizon)
  } else {
    const spec = specs[chosen.index]!
    const budget = SEARCH[prep.modelSearch].calibration
    winner = chosen.winner
    // The shortlist's mean, scored on the same holdout, replaces the pick when no worse there (select/combine.ts).
    const combinable = models.combineShortlist === true && method === 'holdout' && !intermittent && shortlist.length >= 2 && (prep.models === undefined || prep.models.includes(SHORTLIST_COMBINATION))
    const seasonalFit = (r: (typeof shortlist)[number]): boolean => isSeasonalFit(specs[r.index]!, r.fit.params)
    const pool = shortlist.filter((r) => seasonalFit(r) === seasonalFit(chosen))
    const combined = combinable && pool.length >= 2 ? combinedHoldout(pool.map((r) => evaluations[r.index]!), prep.values, m, plan.holdout, ranking.metric) : null
    const pickScore = evaluations[chosen.index]!.metrics?.[ranking.metric]
    const pooled =
      combined && typeof pickScore === 'number' && combined.entry.score! <= pickScore
        ? combinedWinner(winner, spec, pool.map((r) => r.fit), prep.values, m, prep.horizon, budget)
        : null
    if (pooled && combined) {
      winner = pooled
      holdoutErrors = combined.withIntervalScores()
      candidates = [{ ...combined.entry, holdoutErrors }, ...candidates]
      members = pool.map((r) => ({ model: specs[r.index]!.name, family: specs[r.index]!.family }))
    } else {
      if (combined) {
        const row = SEARCH[prep.modelSearch].intervalScoresForAll ? { ...combined.entry, holdoutErrors: combined.withIntervalScores() } : combined.entry
        candidates = [...candidates.slice(0, shortlist.length), row, ...candidates.slice(shortlist.length)]
      }
      winner = { ...winner, ...pickBands(spec, winner, prep.values, m, prep.horizon, budget) }
    }
  }
  return assembleResult(
    prep,
    winner,
    {
      method,
      rankBy: ranking.metric,
      holdoutPeriods: method === 'holdout' ? plan.holdout : 0,
      holdoutOrigins: method === 'holdout' ? plan.origins : 0,
      holdoutErrors,
      candidates,
      members,
    },
    warnings,
  )
}

/**
 * Forecast one series: validate and prepare it, shortlist models on a holdout, refit the
 * shortlist on the whole history, keep the one with the lowest AICc and forecast
 * `horizon` periods with intervals.
 * The result is an estimate, not a guarantee: intervals assume the past error pattern
 * continues, and a planner should review it before ordering.
 * @throws EngineInputError on bad input (code and field set)
 */
export function forecastSeries(input: SeriesInput): ForecastResult {
  return forecastSeriesWith(input, DEFAULT_MODELS)
}
