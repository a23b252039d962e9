/**
 * Ranking scored candidates by the ranking measure, rankBy (lower is better).
 * Scores within 1e-9 relative of each other tie; ties go to the lower complexity,
 * then to registry order. If the chosen metric is undefined (null) for any scored
 * candidate (e.g. MASE on a history whose in-sample differences are all zero), the
 * ranking uses MAE for every candidate instead and says so. This ranking shortlists;
 * the final choice among the first three is by AICc (shortlist.ts, shortlistFirst).
 * A candidate whose ranking metric is still undefined (MAE too) cannot be compared:
 * it becomes a 'failed' candidate with a reason and is left out of `order`,
 * so no score is ever Infinity or NaN.
 */
import { approxEqual } from '../numeric.js'
import type { Candidate, MetricName, ModelName, ModelSpec } from '../types.js'
import type { Evaluation } from './evaluate.js'

export const TIE_TOLERANCE = 1e-9

export interface Ranking {
  /** Candidates: scored ones best first, then skipped and failed ones. */
  readonly candidates: Candidate[]
  /** Indexes into the evaluations, best first (scored only). */
  readonly order: number[]
  readonly metric: MetricName
  readonly fellBack: boolean
}

export function rankEvaluations(
  specs: readonly ModelSpec[],
  evaluations: readonly Evaluation[],
  requested: MetricName,
): Ranking {
  const withMetrics = evaluations.map((e, i) => i).filter((i) => evaluations[i]!.metrics !== undefined)
  const fellBack = withMetrics.some((i) => evaluations[i]!.metrics![requested] === null)
  const metric: MetricName = fellBack ? 'mae' : requested
  const value = (i: number): number | null => {
    const v = evaluations[i]!.metrics![metric]
    return v === null || !Number.isFinite(v) ? null : v
  }
  const scored = withMetrics.filter((i) => value(i) !== null)
  const score = (i: number): number => value(i)!
  const order = [...scored].sort((a, b) => {
    const sa = score(a)
    const sb = score(b)
    if (!approxEqual(sa, sb, TIE_TOLERANCE)) return sa - sb
    if (specs[a]!.complexity !== specs[b]!.complexity) return specs[a]!.complexity - specs[b]!.complexity
    return a - b
  })
  const candidates: Candidate[] = order.map((i) => withScore(evaluations[i]!.entry, score(i)))
  for (const i of withMetrics) {
    if (value(i) !== null) continue
    const { score: _score, ...entry } = evaluations[i]!.entry
    candidates.push({ ...entry, status: 'failed', reason: `${metric} is undefined for this candidate, so it cannot be ranked` })
  }
  for (const e of evaluations) if (e.metrics === undefined) candidates.push(e.entry)
  return { candidates, order, metric, fellBack }
}

/**
 * `{ ...entry, score }`. A scored entry (model, family, status, holdoutErrors: evaluate.ts) is
 * written as a literal with the same keys in the same order: the spread took a slow
 * path per entry (about 4% of forecastSeries in a CPU profile).
 */
function withScore(entry: Candidate, score: number): Candidate {
  if (entry.holdoutErrors !== undefined && entry.score === undefined && entry.reason === undefined && Object.keys(entry).length === 4) {
    return { model: entry.model, family: entry.family, status: entry.status, holdoutErrors: entry.holdoutErrors, score }
  }
  return { ...entry, score }
}

/**
 * The candidates in final order: the refitted shortlist (select/shortlist.ts) first, in
 * the order of `names` (best first), then every other candidate as ranked.
 */
export function shortlistFirst(candidates: readonly Candidate[], names: readonly ModelName[]): Candidate[] {
  const front = names.map((name) => candidates.find((e) => e.model === name)).filter((e): e is Candidate => e !== undefined)
  return [...front, ...candidates.filter((e) => !names.includes(e.model))]
}
