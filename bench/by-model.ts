/**
 * Per-model timing for `bench:engine --by-model`: each registered model's fit
 * (plus forecast and analytical variance, as selection and intervals use them)
 * timed apart on the same training parts, to show where the time goes.
 */
import { MODEL_REGISTRY, type ModelName } from '../src/engine/index.js'
import { median } from './accuracy-metrics.js'

export interface ModelTiming {
  model: ModelName
  fits: number
  failed: number
  skipped: number
  medianMicroseconds: number
  meanMicroseconds: number
  totalMs: number
}

const REPS = 3

export function timeEachModel(set: readonly { values: readonly number[] }[], trainLength: number, horizon: number): { series: number; models: ModelTiming[] } {
  const seasonLength = 12
  const training = set.map((s) => s.values.slice(0, trainLength))
  const models: ModelTiming[] = []
  for (const spec of MODEL_REGISTRY) {
    const eligible = training.filter((v) =>
      v.length >= spec.minLength(seasonLength) && (!spec.requiresPositive || v.every((x) => x > 0)))
    let failed = 0
    const run = (): number => {
      failed = 0
      const began = performance.now()
      for (const values of eligible) {
        try {
          const fit = spec.fit(values, { seasonLength })
          fit.forecast(horizon)
          fit.forecastVariance?.(horizon)
        } catch {
          failed++
        }
      }
      return performance.now() - began
    }
    run() // warm-up
    const times = Array.from({ length: REPS }, run)
    const ms = median(times)
    const per = eligible.length > 0 ? (ms * 1000) / eligible.length : 0
    models.push({
      model: spec.name, fits: eligible.length, failed, skipped: training.length - eligible.length,
      medianMicroseconds: per, meanMicroseconds: eligible.length > 0 ? (times.reduce((a, b) => a + b, 0) / REPS * 1000) / eligible.length : 0,
      totalMs: ms,
    })
  }
  models.sort((a, b) => b.totalMs - a.totalMs)
  return { series: set.length, models }
}
