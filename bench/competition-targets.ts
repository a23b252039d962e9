/**
 * The accuracy and interval targets of issue 12, judged on a competition run and printed
 * one per line with "met" / "not met". On the training split they are indicative only.
 */
import type { ReferenceMethod } from './competition-data.js'
import { aggregate, type Aggregate, type SeriesScore } from './competition-scoring.js'

interface Summary {
  readonly group: string
  readonly engine: Aggregate
  readonly theta: Aggregate | null
  readonly owa: number
}

interface ScoredRow {
  readonly engine: SeriesScore
  readonly references: Partial<Record<ReferenceMethod, SeriesScore>>
}

export function printTargets(out: (line?: string) => void, summaries: readonly Summary[], rows: readonly ScoredRow[], split: string): void {
  const verdict = (ok: boolean): string => (ok ? 'met' : 'not met')
  const all = summaries.find((s) => s.group === 'all')
  const frequencies = summaries.filter((s) => s.group !== 'all')
  out(`Targets (issue 12)${split === 'train' ? ', indicative only on the training split' : ''}:`)
  if (!all) return
  out(`- OWA <= 0.82 overall: ${all.owa.toFixed(3)}: ${verdict(all.owa <= 0.82)}`)
  for (const f of frequencies) {
    if (!f.theta) continue
    const ratio = f.engine.mase / f.theta.mase
    out(`- MASE at least 5% below Theta, ${f.group}: ${f.engine.mase.toFixed(3)} vs ${f.theta.mase.toFixed(3)} (ratio ${ratio.toFixed(3)}): ${verdict(ratio <= 0.95)}`)
  }
  const c95 = all.engine.cov95
  const c80 = all.engine.cov80
  out(`- cov95 overall in [0.93, 0.97]: ${c95.toFixed(3)}: ${verdict(c95 >= 0.93 && c95 <= 0.97)}`)
  out(`- cov80 overall in [0.77, 0.83]: ${c80.toFixed(3)}: ${verdict(c80 >= 0.77 && c80 <= 0.83)}`)
  for (const f of frequencies) out(`- cov95 >= 0.90, ${f.group}: ${f.engine.cov95.toFixed(3)}: ${verdict(f.engine.cov95 >= 0.9)}`)
  const methods: ReferenceMethod[] = ['naive2', 'theta', 'comb', 'ets_auto']
  for (const method of methods) {
    const covered = rows.filter((r) => r.references[method] !== undefined)
    if (covered.length === 0) continue
    const ours = aggregate(covered.map((r) => r.engine)).msis
    const theirs = aggregate(covered.map((r) => r.references[method]!)).msis
    out(`- MSIS below ${method} (${covered.length} series): ${ours.toFixed(2)} vs ${theirs.toFixed(2)}: ${verdict(ours < theirs)}`)
  }
}
