/**
 * Interval coverage per horizon step for `npm run bench:competition -- --by-step`: the
 * share of actuals inside the engine's 80% and 95% intervals at each step 1..h, per
 * frequency. Pooled coverage hides a shape: intervals that are too wide near and too
 * narrow far can average to the promised level, and the far steps are where the error of
 * a trend's slope shows. Bounds are inclusive, as in competition-scoring.ts.
 */
import type { Forecast } from './competition-scoring.js'

export interface StepCoverage {
  readonly group: string
  readonly series: number
  /** cov80[k], cov95[k]: share covered at step k + 1. */
  readonly cov80: readonly number[]
  readonly cov95: readonly number[]
}

export function stepCoverage(group: string, members: readonly { readonly test: readonly number[]; readonly forecast: Forecast }[]): StepCoverage {
  const h = Math.max(0, ...members.map((m) => m.test.length))
  const in80 = new Array<number>(h).fill(0)
  const in95 = new Array<number>(h).fill(0)
  const count = new Array<number>(h).fill(0)
  for (const { test, forecast: f } of members) {
    test.forEach((y, k) => {
      count[k]!++
      if (y >= f.lower80[k]! && y <= f.upper80[k]!) in80[k]!++
      if (y >= f.lower95[k]! && y <= f.upper95[k]!) in95[k]!++
    })
  }
  return {
    group,
    series: members.length,
    cov80: in80.map((c, k) => c / count[k]!),
    cov95: in95.map((c, k) => c / count[k]!),
  }
}

/** Markdown table: one row per level, one column per step. */
export function printStepCoverage(out: (line?: string) => void, s: StepCoverage): void {
  const steps = s.cov95.map((_, k) => String(k + 1))
  out(`Coverage per step, ${s.group} (${s.series} series):`)
  out()
  out(`| level | ${steps.join(' | ')} |`)
  out(`|---|${steps.map(() => '---').join('|')}|`)
  out(`| 80% | ${s.cov80.map((v) => v.toFixed(2)).join(' | ')} |`)
  out(`| 95% | ${s.cov95.map((v) => v.toFixed(2)).join(' | ')} |`)
}
