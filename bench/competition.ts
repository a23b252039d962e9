/**
 * Competition benchmark: the engine's default automatic selection on the 3,003 series of
 * the M3 competition (bench/data/m3, Makridakis & Hibon 2000), scored by the protocol in
 * bench/data/m3/PROTOCOL.md beside the statsmodels reference results (baselines.md).
 *
 * Usage: npm run bench:competition [-- --mode fast|thorough] [--limit N]
 *        [--freq year|quarter|month|other] [--split test|train] [--by-step] [--json]
 *  --split train  scores on the last h values of each training part (the test values
 *                 are never read): the split to make decisions on. References there are
 *                 Naive2 (computed by the protocol); M3's test split is the check.
 *  --limit N      about N series spread evenly over the selection (every k-th).
 *  --by-step      also prints the engine's interval coverage per horizon step and frequency.
 * Single-threaded on purpose (shared cores); seconds per series are wall time per fit.
 */
import { forecastSeries, type ForecastResult, type SeriesInput } from '../src/engine/index.js'
import { createRandom } from '../scripts/seeded-random.js'
import { positiveIntOption } from './cli.js'
import { loadM3, loadReference, M3_FREQUENCIES, REFERENCE_METHODS, spread, trainingSplit, type M3Frequency, type M3Series, type ReferenceMethod } from './competition-data.js'
import { naive2 } from './competition-naive2.js'
import { aggregate, bootstrapInterval, owa, scoreSeries, type Aggregate, type Forecast, type SeriesScore } from './competition-scoring.js'
import { printStepCoverage, stepCoverage } from './competition-steps.js'
import { printTargets } from './competition-targets.js'

const out = (line = ''): void => { process.stdout.write(line + '\n') }
function option(name: string): string | undefined {
  const at = process.argv.indexOf(`--${name}`)
  return at >= 0 ? process.argv[at + 1] : undefined
}
function choice<T extends string>(name: string, allowed: readonly T[], fallback: T): T {
  const v = option(name) ?? fallback
  if (!(allowed as readonly string[]).includes(v)) throw new Error(`--${name} must be one of ${allowed.join(', ')}`)
  return v as T
}

const MODES = ['fast', 'thorough'] as const
type Mode = (typeof MODES)[number]
const mode: Mode = choice('mode', MODES, 'fast')
const split = choice('split', ['test', 'train'] as const, 'test')
const freqOption = option('freq')
if (freqOption !== undefined && !(M3_FREQUENCIES as readonly string[]).includes(freqOption)) {
  throw new Error(`--freq must be one of ${M3_FREQUENCIES.join(', ')}`)
}
const limit = process.argv.includes('--limit') ? positiveIntOption('limit', 1) : Infinity
const asJson = process.argv.includes('--json')
const byStep = process.argv.includes('--by-step')

/** M3's "other" series have no calendar: fitted as yearly data with no season (m = 1). */
function engineInput(s: M3Series): SeriesInput {
  return {
    demand: s.train,
    frequency: s.frequency === 'other' ? 'year' : s.frequency,
    seasonLength: s.seasonLength,
    horizon: s.h,
    intervalLevels: [80, 95],
    modelSearch: mode,
  }
}

function asForecast(result: ForecastResult): Forecast {
  const bound = (level: number, side: 'low' | 'high'): number[] =>
    result.forecast.map((p) => p.intervals.find((i) => i.level === level)![side])
  return {
    point: result.forecast.map((p) => p.demand),
    lower80: bound(80, 'low'),
    upper80: bound(80, 'high'),
    lower95: bound(95, 'low'),
    upper95: bound(95, 'high'),
  }
}

interface Row {
  readonly series: M3Series
  readonly forecast: Forecast
  readonly engine: SeriesScore
  readonly seconds: number
  readonly model: string
  readonly references: Partial<Record<ReferenceMethod, SeriesScore>>
}

const all = loadM3()
const chosenSplit = split === 'test' ? all : trainingSplit(all)
const selected = spread(chosenSplit.filter((s) => freqOption === undefined || s.frequency === freqOption), limit)
const references = split === 'test' ? REFERENCE_METHODS.map((m) => [m, loadReference(m)] as const) : []

const rows: Row[] = []
const startedAll = performance.now()
for (const s of selected) {
  const began = performance.now()
  const result = forecastSeries(engineInput(s))
  const seconds = (performance.now() - began) / 1000
  const refs: Partial<Record<ReferenceMethod, SeriesScore>> = {}
  if (split === 'test') {
    for (const [method, table] of references) {
      const f = table.get(s.id)
      if (f) refs[method] = scoreSeries(s.train, s.test, s.seasonLength, f)
    }
  } else {
    refs.naive2 = scoreSeries(s.train, s.test, s.seasonLength, naive2(s.train, s.seasonLength, s.h))
  }
  const forecast = asForecast(result)
  rows.push({ series: s, forecast, engine: scoreSeries(s.train, s.test, s.seasonLength, forecast), seconds, model: result.model, references: refs })
}
const totalSeconds = (performance.now() - startedAll) / 1000

const fmt = (v: number, digits: number): string => (Number.isFinite(v) ? v.toFixed(digits) : '-')
function line(name: string, a: Aggregate, n2: Aggregate | null, extra = ''): string {
  return `| ${name} | ${a.n} | ${fmt(a.smape, 2)} | ${fmt(a.mase, 3)} | ${fmt(a.msis, 2)} | ${fmt(a.cov80, 3)} | ${fmt(a.cov95, 3)} | ${n2 ? fmt(owa(a, n2), 3) : '-'} | ${extra} |`
}

interface GroupSummary {
  readonly group: string
  readonly engine: Aggregate
  readonly naive2: Aggregate
  readonly theta: Aggregate | null
  readonly owa: number
  readonly owaInterval: { lower: number; upper: number } | null
  readonly thetaRatioInterval: { lower: number; upper: number } | null
  readonly winsVsTheta: number | null
  readonly secondsPerSeries: number
}

const random = createRandom(20260512)
function summarise(group: string, members: readonly Row[]): GroupSummary {
  const engine = aggregate(members.map((r) => r.engine))
  const n2Scores = members.map((r) => r.references.naive2!)
  const naive2Agg = aggregate(n2Scores)
  const withTheta = members.every((r) => r.references.theta !== undefined)
  const theta = withTheta ? aggregate(members.map((r) => r.references.theta!)) : null
  const meanOf = (idx: readonly number[], pick: (r: Row) => number): number => {
    let s = 0
    for (const i of idx) s += pick(members[i]!)
    return s
  }
  const owaOf = (idx: readonly number[], pick: (r: Row) => SeriesScore): number =>
    0.5 * (meanOf(idx, (r) => pick(r).smape) / meanOf(idx, (r) => r.references.naive2!.smape) +
      meanOf(idx, (r) => pick(r).mase) / meanOf(idx, (r) => r.references.naive2!.mase))
  const owaInterval = bootstrapInterval(members.length, (idx) => owaOf(idx, (r) => r.engine), 0.9, 1000, random)
  const thetaRatioInterval = withTheta
    ? bootstrapInterval(members.length, (idx) => owaOf(idx, (r) => r.engine) / owaOf(idx, (r) => r.references.theta!), 0.9, 1000, random)
    : null
  const winsVsTheta = withTheta ? members.filter((r) => r.engine.mase < r.references.theta!.mase).length : null
  return {
    group,
    engine,
    naive2: naive2Agg,
    theta,
    owa: owa(engine, naive2Agg),
    owaInterval,
    thetaRatioInterval,
    winsVsTheta,
    secondsPerSeries: members.reduce((a, r) => a + r.seconds, 0) / members.length,
  }
}

const groups: [string, Row[]][] = [
  ...M3_FREQUENCIES.map((f: M3Frequency) => [f, rows.filter((r) => r.series.frequency === f)] as [string, Row[]]),
  ['all', rows],
]
const summaries: GroupSummary[] = []
for (const [group, members] of groups) if (members.length > 0) summaries.push(summarise(group, members))

if (asJson) {
  out(JSON.stringify({ mode, split, limit: Number.isFinite(limit) ? limit : null, totalSeconds, summaries }, null, 2))
} else {
  out(`# bench:competition: M3, ${split} split, mode ${mode}, ${rows.length} series, ${fmt(totalSeconds, 1)} s in all (${fmt(rows.length / totalSeconds, 0)} series/s)`)
  out(split === 'test'
    ? 'References: statsmodels 0.13.5 forecasts from bench/data/m3/baselines (ets_auto on its subset only, beside Almanac on the same series).'
    : 'Training split: the last h values of each training part are held out; Naive2 computed by PROTOCOL.md. Decide here; check on the test split.')
  for (const [group, members] of groups) {
    if (members.length === 0) continue
    const sum = summaries.find((x) => x.group === group)!
    out()
    out(`## ${group} (h = ${members[0]!.series.h === members.at(-1)!.series.h ? members[0]!.series.h : 'per frequency'})`)
    out()
    out('| method | n | sMAPE | MASE | MSIS | cov80 | cov95 | OWA | note |')
    out('|---|---|---|---|---|---|---|---|---|')
    const wins = sum.winsVsTheta === null ? '' : `MASE below Theta on ${sum.winsVsTheta} of ${members.length} series; `
    const ci = sum.owaInterval ? `OWA 90% bootstrap ${fmt(sum.owaInterval.lower, 3)}-${fmt(sum.owaInterval.upper, 3)}; ` : ''
    const ratio = sum.thetaRatioInterval ? `OWA / Theta's 90% bootstrap ${fmt(sum.thetaRatioInterval.lower, 3)}-${fmt(sum.thetaRatioInterval.upper, 3)}; ` : ''
    out(line(`**Almanac (${mode})**`, sum.engine, sum.naive2, `${wins}${ci}${ratio}${fmt(sum.secondsPerSeries * 1000, 2)} ms per series`))
    for (const method of REFERENCE_METHODS) {
      const covered = members.filter((r) => r.references[method] !== undefined)
      if (covered.length === 0) continue
      const refAgg = aggregate(covered.map((r) => r.references[method]!))
      const n2 = aggregate(covered.map((r) => r.references.naive2!))
      if (covered.length === members.length) {
        out(line(method, refAgg, n2))
      } else {
        out(line(`${method} (subset)`, refAgg, n2))
        out(line('Almanac on that subset', aggregate(covered.map((r) => r.engine)), n2))
      }
    }
  }
  const tally = new Map<string, number>()
  for (const r of rows) tally.set(r.model, (tally.get(r.model) ?? 0) + 1)
  out()
  out(`Chosen models: ${[...tally].sort((a, b) => b[1] - a[1]).map(([m, c]) => `${m} ${c}`).join(', ')}`)
  out()
  if (byStep) {
    for (const [group, members] of groups) {
      if (group === 'all' || members.length === 0) continue
      printStepCoverage(out, stepCoverage(group, members.map((r) => ({ test: r.series.test, forecast: r.forecast }))))
      out()
    }
  }
  printTargets(out, summaries, rows.map((r) => ({ engine: r.engine, references: r.references })), split)
}

export type { GroupSummary }
