/**
 * Calibration errors for the winner's intervals (intervals.ts, method 'calibrated').
 *
 * The winning model is refitted at rolling origins inside the history: at origin
 * e = n - d it is trained on y[0 .. e) and forecasts min(d, horizon) steps. intervals.ts
 * divides each h-step error by the spread the final fit claims for step h, so errors of
 * different steps share one scale ("scaled relative to the model's own sd"; the final
 * fit's spread rather than each origin's, because a fit on a short training part can
 * claim a spread near zero). The intervals then use quantiles of these standardised errors (split
 * conformal prediction: Vovk, Gammerman & Shafer 2005; empirical intervals from past
 * h-step errors: Williams & Goodman 1971; both from memory). Pooling over steps keeps
 * the model's shape of growth with h and corrects its level, which the few errors per
 * step could not estimate alone.
 *
 * Offsets d run over 1 .. horizon + extra (so the far steps get errors too), thinned to
 * at most `maxFits` evenly spread offsets to bound the cost; an origin needs the model's
 * minimum training length and at least MIN_CALIBRATION_TRAINING points (fits on fewer
 * points are too unlike the final fit to say how it errs).
 */
import type { ModelParams, ModelSpec } from '../types.js'
import { requiredLength } from './candidates.js'
import { checkedForecast } from './evaluate.js'

export interface CalibrationBudget {
  /** Offsets beyond the horizon, so the last step gets errors from several origins. */
  readonly extra: number
  readonly maxFits: number
}

export const MIN_CALIBRATION_TRAINING = 6

/** One forecast error at a rolling origin: actual minus forecast, `step` periods ahead (1-based). */
export interface CalibrationError {
  readonly step: number
  readonly error: number
}

export function calibrationOffsets(n: number, horizon: number, minTrain: number, budget: CalibrationBudget): number[] {
  const last = Math.min(horizon + budget.extra, n - minTrain)
  if (last < 1) return []
  const count = Math.min(last, budget.maxFits)
  const out: number[] = []
  for (let i = 0; i < count; i++) {
    const d = count === 1 ? 1 : 1 + Math.round((i * (last - 1)) / (count - 1))
    if (out[out.length - 1] !== d) out.push(d)
  }
  return out
}

/** Errors of the model's forecasts at rolling origins; fits that fail are skipped. */
export function calibrationErrors(
  spec: ModelSpec,
  values: readonly number[],
  seasonLength: number,
  horizon: number,
  params: ModelParams | undefined,
  budget: CalibrationBudget,
): CalibrationError[] {
  const n = values.length
  const out: CalibrationError[] = []
  const minTrain = Math.max(MIN_CALIBRATION_TRAINING, requiredLength(spec, seasonLength))
  for (const d of calibrationOffsets(n, horizon, minTrain, budget)) {
    const e = n - d
    const steps = Math.min(d, horizon)
    try {
      const point = checkedForecast(spec.fit(values.slice(0, e), { seasonLength, initialParams: params }), steps)
      for (let h = 0; h < steps; h++) out.push({ step: h + 1, error: values[e + h]! - point[h]! })
    } catch {
      // An origin the model cannot fit gives no errors; the others still count.
    }
  }
  return out
}
