/**
 * Diagnostic for `bench:accuracy --per-model`: every candidate forced alone
 * (`models: [name]`) on every fixture series, its mean MASE per group (seasonal
 * series, m > 1, and non-seasonal ones) beside statsmodels auto-ETS on the same
 * series, and the "oracle" that picks the best candidate per series after seeing
 * the test data (a bound on what selection could reach, not a method).
 */
import { forecastSeries, MODEL_REGISTRY, type ModelName } from '../src/engine/index.js'
import type { FixtureSeries } from './accuracy-fixture.js'
import { mase, mean, seasonalNaiveScale } from './accuracy-metrics.js'

export const GROUPS = ['seasonal', 'non-seasonal'] as const
export type Group = (typeof GROUPS)[number]
export interface GroupScore { series: number; meanMase: number; etsMeanMase: number }
export interface PerModelRow { model: ModelName; groups: Record<Group, GroupScore | null> }

const groupOf = (s: FixtureSeries): Group => (s.seasonLength > 1 ? 'seasonal' : 'non-seasonal')

export function perModel(series: readonly FixtureSeries[]): { rows: PerModelRow[]; oracle: Record<Group, GroupScore> } {
  const best = new Map<string, number>()
  const etsScore = new Map<string, number>()
  const rows: PerModelRow[] = []
  for (const spec of MODEL_REGISTRY) {
    const own: Record<Group, number[]> = { seasonal: [], 'non-seasonal': [] }
    const ets: Record<Group, number[]> = { seasonal: [], 'non-seasonal': [] }
    for (const s of series) {
      const scale = seasonalNaiveScale(s.train, s.seasonLength)
      if (scale === null) continue
      try {
        const r = forecastSeries({
          demand: s.train, frequency: s.frequency, seasonLength: s.seasonLength,
          horizon: s.test.length, models: [spec.name],
        })
        if (r.model !== spec.name) continue // the engine fell back (e.g. flat history)
        const score = mase(s.test, r.forecast.map((p) => p.demand), scale)
        const reference = mase(s.test, s.ets.forecast, scale)
        own[groupOf(s)].push(score)
        ets[groupOf(s)].push(reference)
        etsScore.set(s.name, reference)
        best.set(s.name, Math.min(best.get(s.name) ?? Infinity, score))
      } catch {
        // not applicable to this series (too short, seasonal on m = 1, ...)
      }
    }
    const groups = {} as Record<Group, GroupScore | null>
    for (const g of GROUPS) {
      groups[g] = own[g].length === 0 ? null : { series: own[g].length, meanMase: mean(own[g]), etsMeanMase: mean(ets[g]) }
    }
    rows.push({ model: spec.name, groups })
  }
  const oracle = {} as Record<Group, GroupScore>
  for (const g of GROUPS) {
    const names = series.filter((s) => groupOf(s) === g && best.has(s.name)).map((s) => s.name)
    oracle[g] = {
      series: names.length,
      meanMase: mean(names.map((n) => best.get(n) ?? NaN)),
      etsMeanMase: mean(names.map((n) => etsScore.get(n) ?? NaN)),
    }
  }
  return { rows, oracle }
}
