/**
 * 'state-space-smoothing': automatic exponential smoothing in the state-space framework
 * of Hyndman, Koehler, Ord and Snyder (2008), "Forecasting with Exponential Smoothing:
 * The State Space Approach", Springer; the automatic procedure of Hyndman, Koehler,
 * Snyder and Grose (2002), IJF 18(3).
 *
 * Every admissible form (forms.ts: error A/M x trend N/A/Ad x season N/A/M, no additive
 * error with multiplicative season, multiplicative parts only for positive data) is
 * estimated by maximum likelihood (estimate.ts, filter.ts) and the one with the lowest
 * AICc = -2 log L + 2 k n / (n - k - 1) is kept. Forecast variances: variance.ts
 * (analytic for classes 1 and 2, seeded simulation otherwise).
 *
 * A form is tried only when AICc is defined (n > k + 1); seasonal forms also need two
 * full seasons (their starting values come from a classical decomposition).
 *
 * `params` name the chosen form by their keys: trendWeight only with a trend, damping
 * only when damped, seasonWeight and startSeason only with a season; multiplicativeError
 * and multiplicativeSeason are 1 or 0. The fit also carries `form` (e.g. `M,Ad,M`) and
 * the AICc of every form tried.
 */
import { EngineInputError, tooShort } from '../errors.js'
import { checkFinite, checkHorizon, checkSeries } from '../trend/guards.js'
import type { FitContext, ModelFit, ModelSpec } from '../types.js'
import { admissibleForms, formName, freeParameterCount, type StateSpaceForm } from './forms.js'
import { pointForecasts } from './filter.js'
import { estimateForm, evaluateForm, type FormEstimate } from './estimate.js'
import { forecastVariances } from './variance.js'

const NAME = 'state-space-smoothing'
/** A,N,N has k = 3: AICc needs n >= 5. */
const MIN_LENGTH = 5

export interface StateSpaceFit extends ModelFit {
  /** Taxonomy name of the chosen form, e.g. `A,Ad,N`. */
  readonly form: string
  /** AICc of every form estimated, by taxonomy name. */
  readonly formScores: Readonly<Record<string, number>>
  readonly logLikelihood: number
  readonly aicc: number
}

export function eligibleForms(series: readonly number[], seasonLength: number): StateSpaceForm[] {
  const n = series.length
  let positive = true
  for (const v of series) if (!(v > 0)) positive = false
  return admissibleForms(seasonLength, positive).filter((form) => {
    const m = form.season === 'none' ? 0 : seasonLength
    if (m > 0 && n < 2 * m) return false
    return n > freeParameterCount(form, m) + 1
  })
}

/** Fits one estimate as a ModelFit. */
export function toModelFit(est: FormEstimate, series: readonly number[], extra: { formScores: Record<string, number> }): StateSpaceFit {
  const n = series.length
  const fitted = new Array<number>(n)
  evaluateForm(est.form, series, est.weights, est.initial, fitted)
  checkFinite(fitted, NAME)
  const { form, weights, initial, run } = est
  const params: Record<string, number | number[]> = { levelWeight: weights.alpha }
  if (form.trend !== 'none') params.trendWeight = weights.beta
  if (form.trend === 'damped') params.damping = weights.phi
  if (form.season !== 'none') params.seasonWeight = weights.gamma
  params.startLevel = initial.level
  if (form.trend !== 'none') params.startTrend = initial.trend
  if (form.season !== 'none') params.startSeason = initial.season.slice()
  params.multiplicativeError = form.error === 'mul' ? 1 : 0
  if (form.season !== 'none') params.multiplicativeSeason = form.season === 'mul' ? 1 : 0
  return {
    model: NAME,
    form: formName(form),
    formScores: extra.formScores,
    logLikelihood: est.logLikelihood,
    aicc: est.aicc,
    params,
    fitted,
    forecast(horizon: number): number[] {
      checkHorizon(horizon)
      const out = pointForecasts(form, run, n, weights.phi, horizon)
      checkFinite(out, NAME)
      return out
    },
    forecastVariance(horizon: number): number[] {
      checkHorizon(horizon)
      const point = pointForecasts(form, run, n, weights.phi, horizon)
      const out = forecastVariances(form, weights, run, point, n)
      checkFinite(out, NAME)
      return out
    },
  }
}

/**
 * Estimates every eligible form and keeps the lowest AICc.
 * @throws EngineInputError on empty, non-finite or too-short input
 */
export function fitStateSpaceSmoothing(series: readonly number[], seasonLength: number): StateSpaceFit {
  checkSeries(series, NAME, MIN_LENGTH)
  if (!Number.isInteger(seasonLength) || seasonLength < 1) {
    throw new EngineInputError('invalid-option', `${NAME} needs a whole season length of at least 1`, 'seasonLength')
  }
  const forms = eligibleForms(series, seasonLength)
  if (forms.length === 0) throw tooShort(NAME, MIN_LENGTH, series.length)
  const formScores: Record<string, number> = {}
  let best: FormEstimate | undefined
  for (const form of forms) {
    const est = estimateForm(form, series, seasonLength)
    formScores[formName(form)] = est.aicc
    if (Number.isFinite(est.aicc) && (best === undefined || est.aicc < best.aicc)) best = est
  }
  if (best === undefined) throw tooShort(NAME, MIN_LENGTH, series.length)
  return toModelFit(best, series, { formScores })
}

export const stateSpaceSmoothing: ModelSpec = {
  name: NAME,
  family: 'seasonal-trend',
  complexity: 6,
  seasonal: false,
  requiresPositive: false,
  minLength: () => MIN_LENGTH,
  fit: (series: readonly number[], ctx: FitContext) => fitStateSpaceSmoothing(series, ctx.seasonLength),
}
