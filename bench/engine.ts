/**
 * Engine speed benchmark: synthetic monthly series of 60 points through
 * forecastSeries with default settings (every eligible candidate scored on a
 * 12-point holdout, the winner refitted on the full history, 80% and 95%
 * intervals), horizon 12, on one thread.
 *
 * Usage: npm run bench:engine [-- --series 10000 --reps 3 --seed 7 --mode fast|thorough --by-model --json]
 * Target (from the product issue): at least 2,000 series per second per core.
 * The machine is shared and noisy: read the median and the spread, not one run.
 */
import { cpus, loadavg } from 'node:os'
import { forecastSeries, type ModelName } from '../src/engine/index.js'
import { median } from './accuracy-metrics.js'
import { timeEachModel } from './by-model.js'
import { syntheticSet } from './synthetic.js'
import { positiveIntOption } from './cli.js'

const SERIES = positiveIntOption('series', 10_000)
const REPS = Math.max(3, positiveIntOption('reps', 3))
const SEED = positiveIntOption('seed', 7)
const LENGTH = 60
const HORIZON = 12
const TARGET = 2_000
const modeAt = process.argv.indexOf('--mode')
const modeArg = modeAt >= 0 ? process.argv[modeAt + 1] : 'fast'
if (modeArg !== 'fast' && modeArg !== 'thorough') throw new Error('--mode must be fast or thorough')
const MODE: 'fast' | 'thorough' = modeArg
const out = (line = ''): void => { process.stdout.write(line + '\n') }

const set = syntheticSet(SEED, SERIES, LENGTH)
const memory = { rss: 0, heapUsed: 0 }
function sampleMemory(): void {
  const m = process.memoryUsage()
  if (m.rss > memory.rss) memory.rss = m.rss
  if (m.heapUsed > memory.heapUsed) memory.heapUsed = m.heapUsed
}

/** One pass over `count` series; returns elapsed ms and the winners tally. */
function pass(count: number): { ms: number; cpuMs: number; winners: Map<ModelName, number> } {
  const winners = new Map<ModelName, number>()
  const cpuBefore = process.cpuUsage()
  const began = performance.now()
  for (let i = 0; i < count; i++) {
    const result = forecastSeries({ demand: set[i]!.values, frequency: 'month', horizon: HORIZON, modelSearch: MODE })
    winners.set(result.model, (winners.get(result.model) ?? 0) + 1)
    if (i % 250 === 0) sampleMemory()
  }
  const ms = performance.now() - began
  const cpu = process.cpuUsage(cpuBefore)
  sampleMemory()
  return { ms, cpuMs: (cpu.user + cpu.system) / 1000, winners }
}

pass(Math.min(SERIES, 1_000)) // warm-up: JIT compilation
const runs: number[] = []
const cpuRuns: number[] = []
let winners = new Map<ModelName, number>()
for (let r = 0; r < REPS; r++) {
  const p = pass(SERIES)
  runs.push(p.ms)
  cpuRuns.push(p.cpuMs)
  winners = p.winners
}
const perSecond = runs.map((ms) => (SERIES / ms) * 1000)
// Process CPU time (user + system, all threads: includes the garbage collector's helper
// threads) is less sensitive than wall time to other processes on a shared machine.
const perCpuSecond = cpuRuns.map((ms) => (SERIES / ms) * 1000)
const report = {
  node: process.version,
  cpu: cpus()[0]?.model ?? 'unknown',
  loadAverage1m: loadavg()[0]!,
  series: SERIES,
  length: LENGTH,
  horizon: HORIZON,
  repetitions: REPS,
  seriesPerSecond: { median: median(perSecond), min: Math.min(...perSecond), max: Math.max(...perSecond) },
  seriesPerCpuSecond: { median: median(perCpuSecond), min: Math.min(...perCpuSecond), max: Math.max(...perCpuSecond) },
  microsecondsPerSeries: median(runs.map((ms) => (ms * 1000) / SERIES)),
  peakRssMiB: memory.rss / 2 ** 20,
  maxRssMiB: process.resourceUsage().maxRSS / 1024,
  peakHeapUsedMiB: memory.heapUsed / 2 ** 20,
  targetMet: median(perSecond) >= TARGET,
  winners: Object.fromEntries([...winners].sort((a, b) => b[1] - a[1])),
  byModel: process.argv.includes('--by-model') ? timeEachModel(set.slice(0, Math.min(SERIES, 2_000)), LENGTH - HORIZON, HORIZON) : undefined,
}

if (process.argv.includes('--json')) {
  out(JSON.stringify(report, null, 2))
} else {
  const f = (v: number, d = 0): string => v.toLocaleString('en-US', { maximumFractionDigits: d, minimumFractionDigits: d })
  out(`Engine benchmark: ${f(SERIES)} monthly series x ${LENGTH} points, horizon ${HORIZON}, default settings, modelSearch ${MODE}, one thread`)
  out(`Node ${report.node}, ${report.cpu}, load average ${report.loadAverage1m.toFixed(2)}`)
  out(`series/s: median ${f(report.seriesPerSecond.median)} (min ${f(report.seriesPerSecond.min)}, max ${f(report.seriesPerSecond.max)}) over ${REPS} repetitions after warm-up`)
  out(`series per CPU second: median ${f(report.seriesPerCpuSecond.median)} (min ${f(report.seriesPerCpuSecond.min)}, max ${f(report.seriesPerCpuSecond.max)}) (process user + system time)`)
  out(`per series: ${f(report.microsecondsPerSeries)} µs (median)`)
  out(`memory: peak RSS sampled ${f(report.peakRssMiB, 1)} MiB (maxRSS ${f(report.maxRssMiB, 1)} MiB), peak heapUsed ${f(report.peakHeapUsedMiB, 1)} MiB`)
  out(`target >= ${f(TARGET)} series/s per core (wall-clock median): ${report.targetMet ? 'MET' : 'NOT MET'} (${(report.seriesPerSecond.median / TARGET).toFixed(2)}x; ` +
    `${(report.seriesPerCpuSecond.median / TARGET).toFixed(2)}x on CPU time)`)
  out(`winners: ${Object.entries(report.winners).map(([m, n]) => `${m} ${n}`).join(', ')}`)
  if (report.byModel) {
    out()
    out(`Per-model fit on ${report.byModel.series} training parts of ${LENGTH - HORIZON} points (fit + forecast(${HORIZON}) + variance when offered):`)
    out('| model                              | fits  | failed | µs/fit median | µs/fit mean | share of total |')
    out('|------------------------------------|-------|--------|---------------|-------------|----------------|')
    const total = report.byModel.models.reduce((a, m) => a + m.totalMs, 0)
    for (const m of report.byModel.models) {
      out(`| ${m.model.padEnd(34)} | ${String(m.fits).padStart(5)} | ${String(m.failed).padStart(6)} | ` +
        `${f(m.medianMicroseconds, 1).padStart(13)} | ${f(m.meanMicroseconds, 1).padStart(11)} | ${(100 * m.totalMs / total).toFixed(1).padStart(13)}% |`)
    }
    out(`All candidates once on the training part: ${f((total * 1000) / report.byModel.series)} µs per series ` +
      `(croston and sba included; by default they run only on intermittent series), against ` +
      `${f(report.microsecondsPerSeries)} µs per series measured end to end (the rest: preparation, holdout metrics, ` +
      `ranking, refit of the winner, intervals).`)
  }
}
