/**
 * The shortlist's combination as one more candidate (combination/shortlist-combination.ts).
 *
 * After the shortlist is refitted and ordered by AICc (shortlist.ts), the equal-weight
 * mean of its members is scored on the same holdout origins as every candidate: at each
 * origin its forecast is the mean of the members' holdout forecasts, scored by the same
 * measures against the same actuals. It replaces the AICc pick when its ranking score is
 * no worse than the pick's. One holdout is the evidence for both, so neither has the
 * advantage of being chosen on it: the combination's members were ranked on that holdout
 * as the pick was.
 *
 * Decided on the M3 training split (bench/RESULTS.md, "Combining the shortlist"): the
 * AICc pick alone, the mean always, the mean of members within a ratio of the best
 * holdout score or an AICc distance, and this rule were compared there; the mean always
 * was best on that split but worst on the other collection we hold (bench:accuracy's 31
 * series), this rule second on both.
 *
 * Not formed: with fewer than two refitted members, for intermittent demand (whose
 * methods already average), or when a request lists `models` without naming
 * 'shortlist-combination'.
 */
import { averageMetrics, computeMetrics, intervalMetrics } from '../metrics.js'
import { meanForecast, SHORTLIST_COMBINATION, COMBINATION_FAMILY } from '../combination/shortlist-combination.js'
import type { Candidate, MetricName, MetricSet } from '../types.js'
import type { Evaluation } from './evaluate.js'

export interface CombinedHoldout {
  /** The point measures (the candidate row's holdoutErrors). */
  readonly metrics: MetricSet
  readonly entry: Candidate
  /**
   * The point measures with MSIS and pinball added, on demand: the members' own spreads
   * cost about a fit each for models without a variance formula, so they are worked out
   * only for the chosen model, as for single models (evaluate.ts).
   */
  readonly withIntervalScores: () => MetricSet
}

/**
 * The combination's holdout errors from its members' evaluations (all scored on the same
 * origins), with MSIS and pinball from the mean of the members' own spreads; null when a
 * member has no holdout forecasts or the ranking measure is undefined for the mean.
 */
export function combinedHoldout(
  members: readonly Evaluation[],
  values: readonly number[],
  seasonLength: number,
  holdout: number,
  metric: MetricName,
): CombinedHoldout | null {
  if (members.length < 2 || members.some((e) => e.holdout === undefined)) return null
  const origins = members[0]!.holdout!.forecasts.length
  if (members.some((e) => e.holdout!.forecasts.length !== origins)) return null
  const n = values.length
  const sets: MetricSet[] = []
  const forecasts: number[][] = []
  for (let k = 0; k < origins; k++) {
    const end = n - holdout - k
    const f = meanForecast(members.map((e) => e.holdout!.forecasts[k]!))
    forecasts.push(f)
    sets.push(computeMetrics(values.slice(end, end + holdout), f, values.slice(0, end), seasonLength))
  }
  const metrics = averageMetrics(sets)
  const score = metrics[metric]
  if (score === null || !Number.isFinite(score)) return null
  const withIntervalScores = (): MetricSet => {
    const spreads = members.map((e) => e.holdout!.spreads())
    const each = forecasts.map((f, k) => {
      const sds = spreads.map((s) => s[k])
      const sd = sds.every((s): s is readonly number[] => s !== null) ? meanForecast(sds) : null
      const end = n - holdout - k
      return intervalMetrics(values.slice(end, end + holdout), f, sd, values.slice(0, end), seasonLength)
    })
    const avg = (key: 'msis' | 'pinball'): number | null =>
      each.every((x) => x[key] !== null) ? each.reduce((a, x) => a + x[key]!, 0) / each.length : null
    return { ...metrics, msis: avg('msis'), pinball: avg('pinball') }
  }
  return {
    metrics,
    entry: { model: SHORTLIST_COMBINATION, family: COMBINATION_FAMILY, status: 'scored', holdoutErrors: metrics, score },
    withIntervalScores,
  }
}
