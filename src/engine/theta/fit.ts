/**
 * Shared fitting of 'optimised-theta' and 'dynamic-optimised-theta': seasonal adjustment
 * exactly as the standard 'theta' (trend/theta.ts: 90% autocorrelation test, classical
 * decomposition), the model of core.ts on the adjusted series, forecasts re-seasonalised.
 */
import { EngineInputError } from '../errors.js'
import { applyAdjustment, thetaSeasonalAdjustment } from '../trend/theta.js'
import { checkFinite, checkHorizon, checkSeries } from '../trend/guards.js'
import type { ModelFit, ModelName } from '../types.js'
import { estimateTheta, runTheta, thetaForecast, type ThetaParams } from './core.js'

export const MIN_LENGTH = 4

export interface ThetaFitOptions {
  /** Fixed parameters instead of estimates (used by the tests). */
  readonly params?: ThetaParams
}

export function fitOptimisedTheta(
  name: ModelName,
  dynamic: boolean,
  series: readonly number[],
  seasonLength: number,
  options: ThetaFitOptions = {},
): ModelFit {
  checkSeries(series, name, MIN_LENGTH)
  if (!Number.isInteger(seasonLength) || seasonLength < 1) {
    throw new EngineInputError('invalid-option', `${name} needs a whole season length of at least 1`, 'seasonLength')
  }
  const n = series.length
  const m = seasonLength
  const { figure, multiplicative, adjusted, factor, reseason } = applyAdjustment(series, thetaSeasonalAdjustment(series, m), m)
  const p = options.params ?? estimateTheta(adjusted, dynamic)
  const inner = new Array<number>(n)
  const run = runTheta(adjusted, p, dynamic, inner)
  const fitted = inner.map((v, t) => reseason(v, t))
  const sigma2 = run.sse / n
  checkFinite([p.alpha, p.theta, p.startLevel, run.level, run.intercept, run.slope, sigma2], name)
  checkFinite(fitted, name)
  const params: Record<string, number | number[]> = {
    levelWeight: p.alpha,
    theta: p.theta,
    startLevel: p.startLevel,
    intercept: run.intercept,
    slope: run.slope,
    level: run.level,
  }
  if (figure.length > 0) params[multiplicative ? 'seasonFactors' : 'seasonOffsets'] = figure.slice()
  return {
    model: name,
    params,
    fitted,
    forecast(horizon: number): number[] {
      checkHorizon(horizon)
      const out = thetaForecast(run, p, n, horizon).map((v, i) => reseason(v, n + i))
      checkFinite(out, name)
      return out
    },
    forecastVariance(horizon: number): number[] {
      checkHorizon(horizon)
      const out = new Array<number>(horizon)
      for (let h = 1; h <= horizon; h++) {
        const v = sigma2 * (1 + (h - 1) * p.alpha * p.alpha)
        const f = multiplicative ? factor(n + h - 1) : 1
        out[h - 1] = v * f * f
      }
      checkFinite(out, name)
      return out
    },
  }
}
