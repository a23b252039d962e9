/**
 * Scoring one candidate: on holdout(s) from rolling origins, or in-sample.
 *
 * Rolling origins: for k = 0..origins-1 the model is trained on y[0 .. n-holdout-k) and
 * forecasts the next `holdout` periods y[n-holdout-k .. n-k); each metric is averaged
 * over the origins where it is defined (metrics.averageMetrics). The MASE scale of
 * each origin comes from that origin's training part.
 */
import { EngineInputError } from '../errors.js'
import { modelSpread } from '../intervals.js'
import { averageMetrics, computeMetrics, intervalMetrics } from '../metrics.js'
import type { Candidate, MetricSet, ModelFit, ModelParams, ModelSpec } from '../types.js'
import { lengthReason, structuralReason } from './candidates.js'

export interface Evaluation {
  readonly entry: Candidate
  readonly metrics?: MetricSet
  /** Parameters of the fit at the latest origin (starting point for the refit). */
  readonly params?: ModelParams
  /**
   * The holdout's forecasts per origin (origin k trains on y[0 .. n - holdout - k)), and
   * on demand each fit's own spread: what a combination of candidates is scored from
   * (select/combine.ts).
   */
  readonly holdout?: { readonly forecasts: readonly (readonly number[])[]; readonly spreads: () => (readonly number[] | null)[] }
  /**
   * The holdout's interval measures (msis, pinball), averaged over the origins, from each
   * fit's own spread. Computed on demand: the spread of a model without a variance formula
   * needs its in-sample residuals, which cost about as much as the fit.
   */
  readonly intervalScores?: () => { msis: number | null; pinball: number | null }
}

/** The evaluation with msis and pinball added to its metrics and candidate row. */
export function withIntervalScores(e: Evaluation): Evaluation {
  if (!e.intervalScores || !e.metrics) return e
  const metrics = { ...e.metrics, ...e.intervalScores() }
  return { ...e, metrics, entry: { ...e.entry, holdoutErrors: metrics } }
}

function failure(spec: ModelSpec, err: unknown): Evaluation {
  // A fitter signals input it cannot fit with EngineInputError: that is a skip, not a failure.
  const status = err instanceof EngineInputError ? 'skipped' : 'failed'
  const message = err instanceof Error ? err.message : String(err)
  // The candidate row names the model: `needs 24 periods, has 20`, not `<id> needs ...`.
  const reason = message.startsWith(`${spec.name} `) ? message.slice(spec.name.length + 1) : message
  return { entry: { model: spec.name, family: spec.family, status, reason } }
}

export function skipped(spec: ModelSpec, reason: string): Evaluation {
  return { entry: { model: spec.name, family: spec.family, status: 'skipped', reason } }
}

/** Forecasts of a fit, checked for length and finiteness. */
export function checkedForecast(fit: ModelFit, horizon: number): number[] {
  const f = fit.forecast(horizon)
  if (f.length !== horizon || !f.every(Number.isFinite)) {
    throw new Error(`${fit.model} produced a non-finite or short forecast`)
  }
  return f
}

/**
 * The fit's own (uncalibrated) spread per step for the holdout's interval measures
 * (intervals.modelSpread); null when it has none.
 */
function ownSpread(fit: ModelFit, train: readonly number[], steps: number): number[] | null {
  const variance = fit.forecastVariance?.(steps)
  let residuals: number[] = []
  if (!variance || !variance.every((v) => Number.isFinite(v) && v >= 0)) {
    const fitted = fit.fitted
    residuals = []
    for (let t = 0; t < train.length; t++) {
      const f = fitted[t]
      if (f !== undefined && Number.isFinite(f)) residuals.push(train[t]! - f)
    }
  }
  const { method, sd } = modelSpread(steps, variance, residuals)
  return method === 'none' ? null : sd
}

export function evaluateHoldout(
  spec: ModelSpec,
  values: readonly number[],
  seasonLength: number,
  holdout: number,
  origins: number,
): Evaluation {
  const n = values.length
  const why =
    structuralReason(spec, seasonLength, values) ??
    lengthReason(spec, seasonLength, n - holdout - (origins - 1), true)
  if (why) return skipped(spec, why)
  try {
    const sets: MetricSet[] = []
    const kept: { fit: ModelFit; train: number[]; actual: number[]; forecast: number[] }[] = []
    let params: ModelParams | undefined
    for (let k = 0; k < origins; k++) {
      const end = n - holdout - k
      const train = values.slice(0, end)
      const fit = spec.fit(train, { seasonLength })
      const forecast = checkedForecast(fit, holdout)
      const actual = values.slice(end, end + holdout)
      sets.push(computeMetrics(actual, forecast, train, seasonLength))
      kept.push({ fit, train, actual, forecast })
      if (k === 0) params = fit.params
    }
    const metrics = averageMetrics(sets)
    let spreadCache: (number[] | null)[] | undefined
    const spreads = (): (number[] | null)[] => (spreadCache ??= kept.map((o) => ownSpread(o.fit, o.train, holdout)))
    const intervalScores = (): { msis: number | null; pinball: number | null } => {
      const sds = spreads()
      const each = kept.map((o, k) => intervalMetrics(o.actual, o.forecast, sds[k]!, o.train, seasonLength))
      const avg = (key: 'msis' | 'pinball'): number | null =>
        each.every((x) => x[key] !== null) ? each.reduce((a, x) => a + x[key]!, 0) / each.length : null
      return { msis: avg('msis'), pinball: avg('pinball') }
    }
    return {
      entry: { model: spec.name, family: spec.family, status: 'scored', holdoutErrors: metrics },
      metrics,
      params,
      intervalScores,
      holdout: { forecasts: kept.map((o) => o.forecast), spreads },
    }
  } catch (err) {
    return failure(spec, err)
  }
}

/** In-sample one-step errors of a fit on the whole history (used when it is too short for a holdout). */
export function evaluateInSample(spec: ModelSpec, values: readonly number[], seasonLength: number): Evaluation {
  const why = structuralReason(spec, seasonLength, values) ?? lengthReason(spec, seasonLength, values.length, false)
  if (why) return skipped(spec, why)
  try {
    const fit = spec.fit(values, { seasonLength })
    checkedForecast(fit, 1)
    const actual: number[] = []
    const fitted: number[] = []
    fit.fitted.forEach((f, t) => {
      if (Number.isFinite(f)) {
        actual.push(values[t]!)
        fitted.push(f)
      }
    })
    if (actual.length === 0) return skipped(spec, 'has no in-sample fitted values on this history')
    const metrics = computeMetrics(actual, fitted, values, seasonLength)
    return {
      entry: { model: spec.name, family: spec.family, status: 'scored', holdoutErrors: metrics },
      metrics,
      params: fit.params,
    }
  } catch (err) {
    return failure(spec, err)
  }
}
