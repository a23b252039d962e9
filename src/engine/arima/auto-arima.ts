/**
 * 'auto-arima': seasonal ARIMA(p,d,q)(P,D,Q)_m with automatic order selection after
 * Hyndman and Khandakar (2008), "Automatic time series forecasting: the forecast package
 * for R", Journal of Statistical Software 27(3):
 *  1. D from the seasonal strength, then d from KPSS tests on the seasonally differenced
 *     series (unit-root.ts);
 *  2. a mean (or drift) only when d + D <= 1;
 *  3. stepwise search on AICc: start from the best of (2,2)(1,1), (0,0)(0,0), (1,0)(1,0),
 *     (0,1)(0,1) [(p,q)(P,Q); seasonal parts only when m >= 2], then repeatedly move to the
 *     best neighbour (p, q, P or Q changed by one; p and q, or P and Q, together by one)
 *     while AICc improves. Our bounds: p, q <= 3 and P, Q <= 1 (the paper allows 5 and 2),
 *     to keep the cost per series bounded; seasonal terms only for m <= 12.
 * Each order is estimated by exact maximum likelihood (estimate.ts, kalman.ts).
 * Forecasts: the Kalman filter's state forecast of w plus the mean, integrated back through
 * the differencing polynomial. Variances from the psi weights of the full model,
 *   Var(y_{n+h} - forecast) = sigma^2 sum_{j=0}^{h-1} psi_j^2,
 * psi from theta(B) Theta(B^m) / [phi(B) Phi(B^m) (1 - B)^d (1 - B^m)^D] (Box and Jenkins 1970).
 */
import { EngineInputError, tooShort } from '../errors.js'
import { checkFinite, checkHorizon, checkSeries } from '../trend/guards.js'
import type { FitContext, ModelFit, ModelSpec } from '../types.js'
import { estimateArma, runAt, type ArimaOrder, type ArmaEstimate } from './estimate.js'
import { armaForecast } from './kalman.js'
import { difference, differencingPolynomial, expandAr, expandMa, psiWeights } from './polynomials.js'
import { differences, seasonalDifferences } from './unit-root.js'

const NAME = 'auto-arima'
const MIN_LENGTH = 6
const MAX_P = 3
const MAX_Q = 3
const MAX_SEASONAL = 1
const MAX_SEASON_LENGTH = 12

export interface ArimaFit extends ModelFit {
  readonly order: ArimaOrder
  readonly aicc: number
}

/** Forecasts and variances of an estimate on the undifferenced series y. */
export function arimaForecast(
  est: ArmaEstimate,
  y: readonly number[],
  m: number,
  horizon: number,
): { point: number[]; variance: number[] } {
  const o = est.order
  const g = differencingPolynomial(o.d, o.D, m)
  const c = est.coefficients
  const a = expandAr(c.ar, c.seasonalAr, m)
  const w = armaForecast(est.run, a, horizon).map((v) => v + c.mean)
  const extended = y.slice()
  for (let h = 0; h < horizon; h++) {
    let v = w[h]!
    const t = extended.length
    for (let j = 1; j <= g.length; j++) v += g[j - 1]! * extended[t - j]!
    extended.push(v)
  }
  const point = extended.slice(y.length)
  // full AR polynomial (1 - sum a B)(1 - sum g B) as 1 - sum A_j B^j
  const full = new Array<number>(a.length + g.length + 1).fill(0)
  const left = [1, ...a.map((v) => -v)]
  const right = [1, ...g.map((v) => -v)]
  for (let i = 0; i < left.length; i++) for (let j = 0; j < right.length; j++) full[i + j]! += left[i]! * right[j]!
  const psi = psiWeights(full.slice(1).map((v) => -v), expandMa(c.ma, c.seasonalMa, m), horizon)
  const variance: number[] = []
  let acc = 0
  for (let h = 0; h < horizon; h++) {
    acc += psi[h]! * psi[h]!
    variance.push(est.run.sigma2 * acc)
  }
  return { point, variance }
}

function key(o: ArimaOrder): string {
  return `${o.p},${o.q},${o.P},${o.Q}`
}

export function fitAutoArima(series: readonly number[], seasonLength: number): ArimaFit {
  checkSeries(series, NAME, MIN_LENGTH)
  if (!Number.isInteger(seasonLength) || seasonLength < 1) {
    throw new EngineInputError('invalid-option', `${NAME} needs a whole season length of at least 1`, 'seasonLength')
  }
  const seasonal = seasonLength >= 2 && seasonLength <= MAX_SEASON_LENGTH
  const m = seasonal ? seasonLength : 1
  const D = seasonal ? seasonalDifferences(series, m) : 0
  const afterSeasonal = difference(series, differencingPolynomial(0, D, m))
  const d = differences(afterSeasonal)
  const w = difference(series, differencingPolynomial(d, D, m))
  if (w.length < 3) throw tooShort(NAME, series.length + 3 - w.length, series.length)
  const includeMean = d + D <= 1
  const tried = new Map<string, ArmaEstimate>()
  const tryOrder = (p: number, q: number, P: number, Q: number): ArmaEstimate | undefined => {
    if (p < 0 || q < 0 || P < 0 || Q < 0 || p > MAX_P || q > MAX_Q || P > MAX_SEASONAL || Q > MAX_SEASONAL) return undefined
    if (!seasonal && (P > 0 || Q > 0)) return undefined
    const order: ArimaOrder = { p, d, q, P, D, Q }
    const k = key(order)
    if (tried.has(k)) return tried.get(k)
    // AICc needs n > parameters + 1; longer lags than data make no sense either.
    const params = p + q + P + Q + (includeMean ? 1 : 0) + 1
    if (w.length <= params + 1 || w.length <= Math.max(p + m * P, q + m * Q)) return undefined
    const est = estimateArma(w, order, m, includeMean)
    tried.set(k, est)
    return est
  }
  const s = seasonal ? 1 : 0
  let best: ArmaEstimate | undefined
  for (const [p, q, P, Q] of [[2, 2, s, s], [0, 0, 0, 0], [1, 0, s, 0], [0, 1, 0, s]] as const) {
    const est = tryOrder(p, q, P, Q)
    if (est && Number.isFinite(est.aicc) && (!best || est.aicc < best.aicc)) best = est
  }
  if (!best) throw tooShort(NAME, MIN_LENGTH + d + m * D, series.length)
  for (let step = 0; step < 50; step++) {
    const o: ArimaOrder = best.order
    const moves: [number, number, number, number][] = [
      [o.p + 1, o.q, o.P, o.Q], [o.p - 1, o.q, o.P, o.Q], [o.p, o.q + 1, o.P, o.Q], [o.p, o.q - 1, o.P, o.Q],
      [o.p + 1, o.q + 1, o.P, o.Q], [o.p - 1, o.q - 1, o.P, o.Q],
      [o.p, o.q, o.P + 1, o.Q], [o.p, o.q, o.P - 1, o.Q], [o.p, o.q, o.P, o.Q + 1], [o.p, o.q, o.P, o.Q - 1],
      [o.p, o.q, o.P + 1, o.Q + 1], [o.p, o.q, o.P - 1, o.Q - 1],
    ]
    let improved: ArmaEstimate | undefined
    for (const [p, q, P, Q] of moves) {
      const est = tryOrder(p, q, P, Q)
      if (est && est.aicc < (improved ?? best).aicc) improved = est
    }
    if (!improved) break
    best = improved
  }
  return toFit(best, series, m)
}

function toFit(est: ArmaEstimate, series: readonly number[], m: number): ArimaFit {
  const c = est.coefficients
  const o = est.order
  const params: Record<string, number | number[]> = { p: o.p, d: o.d, q: o.q, seasonalP: o.P, seasonalD: o.D, seasonalQ: o.Q }
  if (c.ar.length) params.ar = c.ar.slice()
  if (c.ma.length) params.ma = c.ma.slice()
  if (c.seasonalAr.length) params.seasonalAr = c.seasonalAr.slice()
  if (c.seasonalMa.length) params.seasonalMa = c.seasonalMa.slice()
  if (est.includeMean) params.mean = c.mean
  params.innovationVariance = est.run.sigma2
  // In-sample one-step fitted values: the filter's prediction of w_t plus the mean, integrated
  // with the observed past; NaN for the first values the differencing consumes.
  const g = differencingPolynomial(o.d, o.D, m)
  const w = difference(series, g)
  const predictions = new Array<number>(w.length)
  runAt(w, c, m, predictions)
  const fitted = new Array<number>(series.length).fill(NaN)
  for (let t = g.length; t < series.length; t++) {
    let v = predictions[t - g.length]! + c.mean
    for (let j = 1; j <= g.length; j++) v += g[j - 1]! * series[t - j]!
    fitted[t] = v
  }
  return {
    model: NAME,
    order: o,
    aicc: est.aicc,
    params,
    fitted,
    forecast(horizon: number): number[] {
      checkHorizon(horizon)
      const out = arimaForecast(est, series, m, horizon).point
      checkFinite(out, NAME)
      return out
    },
    forecastVariance(horizon: number): number[] {
      checkHorizon(horizon)
      const out = arimaForecast(est, series, m, horizon).variance
      checkFinite(out, NAME)
      return out
    },
  }
}

export const autoArima: ModelSpec = {
  name: NAME,
  family: 'seasonal-trend',
  complexity: 8,
  seasonal: false,
  requiresPositive: false,
  minLength: () => MIN_LENGTH,
  fit: (series: readonly number[], ctx: FitContext) => fitAutoArima(series, ctx.seasonLength),
}
