/**
 * 'median-combination': the median of a fixed pool of three forecasters,
 *  - 'state-space-smoothing' (automatic exponential smoothing, Hyndman et al. 2008),
 *  - 'optimised-theta' (Fiorucci et al. 2016),
 *  - 'damped-trend-smoothing' (Gardner and McKenzie 1985) on the series seasonally
 *    adjusted as the Theta models adjust it (90% autocorrelation test, classical
 *    decomposition), re-seasonalised: the way the M4 competition's benchmarks treat
 *    seasonality (Makridakis, Spiliotis and Assimakopoulos 2020, IJF 36(1)).
 * Point forecast at each step: the median of the members' forecasts (with two members
 * left, their mean). Combining forecasts of different models, and the median in
 * particular, is robust to one member going astray: Petropoulos and Svetunkov (2020),
 * "A simple combination of univariate models", IJF 36(1) (median of ETS, CES, ARIMA and
 * Theta in the M4 competition); Kourentzes, Barrow and Petropoulos (2019), IJPE 209
 * (forecast pooling); the M4 results (Makridakis et al. 2020). (Citations from memory.)
 *
 * Intervals: the engine builds central normal intervals from a forecast variance, so the
 * combination's variance at step h is the median of the members' variances. Every
 * interval is then centred on the median point with the median of the members'
 * half-widths at any level; this is the "median of the bounds" of the papers above when
 * the members' point forecasts agree, and narrower or wider otherwise. It is a heuristic
 * without a model behind it: the calibration of these intervals has to be checked on
 * data (bench/), not assumed.
 *
 * A member that cannot fit the series (e.g. too short) is left out; at least two must fit.
 * In-sample fitted values are the median of the members' fitted values where defined.
 */
import { EngineInputError } from '../errors.js'
import { fitStateSpaceSmoothing } from '../state-space/index.js'
import { fitSmoothing } from '../smoothing/index.js'
import { fitOptimisedTheta } from '../theta/index.js'
import { applyAdjustment, thetaSeasonalAdjustment } from '../trend/theta.js'
import { checkFinite, checkHorizon, checkSeries } from '../trend/guards.js'
import type { FitContext, ModelFit, ModelName, ModelSpec } from '../types.js'

const NAME = 'median-combination'
/** The largest of the members' minimum lengths (state-space-smoothing needs 5). */
const MIN_LENGTH = 5

export interface CombinationFit extends ModelFit {
  /** The members that fitted, in pool order, with their fits. */
  readonly members: readonly { readonly model: ModelName; readonly fit: ModelFit }[]
}

/** Median of the finite values (mean of the middle two for an even count); NaN when none. */
export function medianOf(values: readonly number[]): number {
  const v = values.filter((x) => Number.isFinite(x)).sort((a, b) => a - b)
  if (v.length === 0) return NaN
  const mid = v.length >> 1
  return v.length % 2 === 1 ? v[mid]! : (v[mid - 1]! + v[mid]!) / 2
}

/** Damped trend smoothing on the Theta-style seasonally adjusted series, re-seasonalised. */
export function fitAdjustedDamped(series: readonly number[], seasonLength: number): ModelFit {
  const m = seasonLength
  const { adjusted, multiplicative, factor, reseason } = applyAdjustment(series, thetaSeasonalAdjustment(series, m), m)
  const inner = fitSmoothing({ name: 'damped-trend-smoothing', trend: 'damped', seasonal: null }, adjusted, { seasonLength: 1 })
  const n = series.length
  return {
    model: 'damped-trend-smoothing',
    params: inner.params,
    fitted: inner.fitted.map((v, t) => reseason(v, t)),
    forecast: (h) => inner.forecast(h).map((v, i) => reseason(v, n + i)),
    forecastVariance: inner.forecastVariance
      ? (h) => inner.forecastVariance!(h).map((v, i) => (multiplicative ? v * factor(n + i) ** 2 : v))
      : undefined,
  }
}

const POOL: readonly { model: ModelName; fit: (series: readonly number[], m: number) => ModelFit }[] = [
  { model: 'state-space-smoothing', fit: fitStateSpaceSmoothing },
  { model: 'optimised-theta', fit: (y, m) => fitOptimisedTheta('optimised-theta', false, y, m) },
  { model: 'damped-trend-smoothing', fit: fitAdjustedDamped },
]

/**
 * @throws EngineInputError on empty, non-finite or too-short input, or when fewer than
 *   two members can fit the series
 */
export function fitMedianCombination(series: readonly number[], seasonLength: number): CombinationFit {
  checkSeries(series, NAME, MIN_LENGTH)
  const members: { model: ModelName; fit: ModelFit }[] = []
  const reasons: string[] = []
  for (const member of POOL) {
    try {
      members.push({ model: member.model, fit: member.fit(series, seasonLength) })
    } catch (err) {
      if (!(err instanceof EngineInputError)) throw err
      reasons.push(`${member.model}: ${err.message}`)
    }
  }
  if (members.length < 2) {
    throw new EngineInputError('series-too-short', `${NAME} needs two members that fit; ${reasons.join('; ')}`)
  }
  const n = series.length
  const fitted = new Array<number>(n)
  for (let t = 0; t < n; t++) fitted[t] = medianOf(members.map((mb) => mb.fit.fitted[t]!))
  const withVariance = members.filter((mb) => mb.fit.forecastVariance !== undefined)
  return {
    model: NAME,
    members,
    params: { memberCount: members.length },
    fitted,
    forecast(horizon: number): number[] {
      checkHorizon(horizon)
      const each = members.map((mb) => mb.fit.forecast(horizon))
      const out = Array.from({ length: horizon }, (_, h) => medianOf(each.map((f) => f[h]!)))
      checkFinite(out, NAME)
      return out
    },
    forecastVariance:
      withVariance.length >= 2
        ? (horizon: number): number[] => {
            checkHorizon(horizon)
            const each = withVariance.map((mb) => mb.fit.forecastVariance!(horizon))
            const out = Array.from({ length: horizon }, (_, h) => medianOf(each.map((v) => v[h]!)))
            checkFinite(out, NAME)
            return out
          }
        : undefined,
  }
}

export const medianCombination: ModelSpec = {
  name: NAME,
  family: 'combination',
  complexity: 12,
  seasonal: false,
  requiresPositive: false,
  minLength: () => MIN_LENGTH,
  fit: (series: readonly number[], ctx: FitContext) => fitMedianCombination(series, ctx.seasonLength),
}
