/**
 * Test doubles: tiny ModelSpecs with obvious behaviour, for testing selection
 * mechanics apart from the real fitters. Not models; never registered.
 */
import { EngineInputError } from '../../../src/engine/errors.js'
import type { FitContext, ModelFamily, ModelFit, ModelName, ModelParams, ModelSpec } from '../../../src/engine/types.js'

interface FakeOptions {
  readonly name: ModelName
  readonly family?: ModelFamily
  readonly complexity?: number
  readonly seasonal?: boolean
  readonly requiresPositive?: boolean
  readonly minLength?: (m: number) => number
  /** Forecast from the training series. */
  readonly forecast: (series: readonly number[], h: number) => number[]
  readonly variance?: (h: number) => number[]
  readonly onFit?: (series: readonly number[], ctx: FitContext) => void
  readonly params?: (series: readonly number[]) => ModelParams
}

export function fakeSpec(o: FakeOptions): ModelSpec {
  return {
    name: o.name,
    family: o.family ?? 'level',
    complexity: o.complexity ?? 1,
    seasonal: o.seasonal ?? false,
    requiresPositive: o.requiresPositive ?? false,
    minLength: o.minLength ?? (() => 2),
    fit(series, ctx): ModelFit {
      o.onFit?.(series, ctx)
      // One-step fitted value at t: the forecast made from y[0..t).
      const fitted = series.map((_, t) => (t === 0 ? NaN : o.forecast(series.slice(0, t), 1)[0]!))
      return {
        model: o.name,
        params: o.params?.(series) ?? { n: series.length },
        fitted,
        forecast: (h) => o.forecast(series, h),
        ...(o.variance ? { forecastVariance: o.variance } : {}),
      }
    },
  }
}

const mean = (s: readonly number[]): number => s.reduce((a, b) => a + b, 0) / s.length

/** Forecasts the last value ('last-value'-like). */
export const fakeLast = (name: ModelName = 'last-value', complexity = 0): ModelSpec =>
  fakeSpec({ name, complexity, forecast: (s, h) => new Array(h).fill(s[s.length - 1]) })

/** Forecasts the training mean. */
export const fakeMean = (name: ModelName = 'level-smoothing', complexity = 1): ModelSpec =>
  fakeSpec({ name, complexity, forecast: (s, h) => new Array(h).fill(mean(s)) })

/** Forecasts a fixed value whatever the data. */
export const fakeConstant = (name: ModelName, value: number, complexity = 1): ModelSpec =>
  fakeSpec({ name, complexity, forecast: (_s, h) => new Array(h).fill(value) })

/** Throws a plain Error (a bug in a fitter): reported as 'failed'. */
export const fakeBroken = (name: ModelName): ModelSpec =>
  fakeSpec({
    name,
    forecast: () => {
      throw new Error('boom')
    },
  })

/** Throws EngineInputError (input it cannot fit): reported as 'skipped'. */
export const fakeRefusing = (name: ModelName): ModelSpec =>
  fakeSpec({
    name,
    forecast: () => {
      throw new EngineInputError('series-too-short', `${name} cannot fit this`)
    },
  })
