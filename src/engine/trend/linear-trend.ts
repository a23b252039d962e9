/**
 * Linear trend: ordinary least squares of the series on t = 1..n, extrapolated.
 * Forecast-error variance is the OLS prediction variance for a new observation,
 *   sigma^2 * (1 + 1/n + (t - tMean)^2 / Sxx),  sigma^2 = SSE / (n - 2)
 * (the standard prediction interval of simple linear regression, from memory; checked
 * against R `predict.lm`: se.fit^2 + sigma^2, in the tests).
 */
import { EngineInputError, tooShort } from '../errors.js'
import type { FitContext, ModelFit, ModelSpec } from '../types.js'
import { checkFinite, checkFitted, checkHorizon, checkSeries } from './guards.js'

export interface LinearTrendFit {
  readonly slope: number
  readonly intercept: number
  /** Number of points. */
  readonly n: number
  readonly xMean: number
  /** Sum of squared deviations of x from its mean. */
  readonly sxx: number
  /** Residual sum of squares. */
  readonly sse: number
}

/**
 * Least-squares line y = intercept + slope * x from centred sums with Neumaier
 * compensation (two passes: means, then deviations), accurate on NIST StRD "Norris".
 * @throws EngineInputError on unequal lengths, fewer than 2 points, non-finite
 *   values or constant x.
 */
export function fitLinearTrend(x: readonly number[], y: readonly number[]): LinearTrendFit {
  const n = x.length
  if (y.length !== n) throw new EngineInputError('invalid-option', 'x and y must have the same length')
  if (n < 2) throw tooShort('linear-trend', 2, n)
  checkSeries(x, 'linear-trend', 2)
  checkSeries(y, 'linear-trend', 2)
  const xMean = compensatedMean(x)
  const yMean = compensatedMean(y)
  let sxx = 0
  let sxxC = 0
  let sxy = 0
  let sxyC = 0
  for (let i = 0; i < n; i++) {
    const dx = x[i]! - xMean
    const dxx = dx * dx
    const dxy = dx * (y[i]! - yMean)
    let t = sxx + dxx
    sxxC += Math.abs(sxx) >= Math.abs(dxx) ? sxx - t + dxx : dxx - t + sxx
    sxx = t
    t = sxy + dxy
    sxyC += Math.abs(sxy) >= Math.abs(dxy) ? sxy - t + dxy : dxy - t + sxy
    sxy = t
  }
  sxx += sxxC
  sxy += sxyC
  if (!(sxx > 0)) throw new EngineInputError('invalid-option', 'linear-trend needs x values that are not all equal')
  const slope = sxy / sxx
  const intercept = yMean - slope * xMean
  let sse = 0
  for (let i = 0; i < n; i++) {
    const e = y[i]! - intercept - slope * x[i]!
    sse += e * e
  }
  const fit = { slope, intercept, n, xMean, sxx, sse }
  checkFinite([slope, intercept, sse], 'linear-trend')
  return fit
}

function compensatedMean(v: readonly number[]): number {
  let s = 0
  let c = 0
  for (let i = 0; i < v.length; i++) {
    const t = s + v[i]!
    c += Math.abs(s) >= Math.abs(v[i]!) ? s - t + v[i]! : v[i]! - t + s
    s = t
  }
  return (s + c) / v.length
}

/** OLS of y on t = 1..n (x built once, no other allocation). */
export function fitTrendOnIndex(y: readonly number[]): LinearTrendFit {
  const x = new Array<number>(y.length)
  for (let i = 0; i < y.length; i++) x[i] = i + 1
  return fitLinearTrend(x, y)
}

const MIN_LENGTH = 3

/** 'linear-trend': y = intercept + slope * t on t = 1..n; fitted values are the line. */
export function fitLinearTrendModel(series: readonly number[]): ModelFit {
  checkSeries(series, 'linear-trend', MIN_LENGTH)
  const line = fitTrendOnIndex(series)
  const { slope, intercept, n, xMean, sxx, sse } = line
  const sigma2 = sse / (n - 2)
  const fitted = new Array<number>(n)
  for (let t = 0; t < n; t++) fitted[t] = intercept + slope * (t + 1)
  checkFitted(fitted, 0, 'linear-trend')
  checkFinite([sigma2], 'linear-trend')
  return {
    model: 'linear-trend',
    params: { slope, intercept, residualVariance: sigma2 },
    fitted,
    forecast(horizon: number): number[] {
      checkHorizon(horizon)
      const out = new Array<number>(horizon)
      for (let h = 1; h <= horizon; h++) out[h - 1] = intercept + slope * (n + h)
      checkFinite(out, 'linear-trend')
      return out
    },
    forecastVariance(horizon: number): number[] {
      checkHorizon(horizon)
      const out = new Array<number>(horizon)
      for (let h = 1; h <= horizon; h++) {
        const d = n + h - xMean
        out[h - 1] = sigma2 * (1 + 1 / n + (d * d) / sxx)
      }
      checkFinite(out, 'linear-trend')
      return out
    },
  }
}

export const linearTrend: ModelSpec = {
  name: 'linear-trend',
  family: 'trend',
  complexity: 2,
  seasonal: false,
  requiresPositive: false,
  minLength: () => MIN_LENGTH,
  fit: (series: readonly number[], _ctx: FitContext) => fitLinearTrendModel(series),
}
