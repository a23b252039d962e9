/**
 * Cost and accuracy of the thorough-mode candidates, each alone, on the M3 collection
 * (Makridakis and Hibon 2000; data and scoring protocol as in the M3 development
 * collection's PROTOCOL.md): milliseconds per series to fit and forecast, and mean MASE,
 * sMAPE, cov80 and cov95 on the official test part, beside the statsmodels Theta
 * reference forecasts (baselines/theta.json) scored on exactly the same series.
 *
 *   npx tsx bench/model-cost.ts --data <m3.json> [--frequency month] [--every 4] [--models a,b]
 *
 * --every k keeps every k-th series of the frequency (a deterministic subsample, for the
 * slower models); the baselines are read from `baselines/` beside the data file.
 * Intervals are normal, point +- z sqrt(variance) from each model's forecastVariance.
 */
import { readFileSync } from 'node:fs'
import { dirname, join } from 'node:path'
import { thoroughModels } from '../src/engine/thorough-models.js'
import { MODEL_REGISTRY } from '../src/engine/models.js'
import type { ModelSpec } from '../src/engine/types.js'
import { positiveIntOption } from './cli.js'

interface M3Series {
  readonly id: string
  readonly frequency: 'year' | 'quarter' | 'month' | 'other'
  readonly seasonLength: number
  readonly h: number
  readonly train: number[]
  readonly test: number[]
}

function option(name: string): string | undefined {
  const at = process.argv.indexOf(`--${name}`)
  return at >= 0 ? process.argv[at + 1] : undefined
}

/** PROTOCOL.md: mean |x_t - x_{t-L}|, L = m unless m = 1 or the training part is shorter than 2m + 1. */
function protocolScale(train: readonly number[], m: number): number {
  const lag = m === 1 || train.length < 2 * m + 1 ? 1 : m
  let s = 0
  for (let t = lag; t < train.length; t++) s += Math.abs(train[t]! - train[t - lag]!)
  return s / (train.length - lag)
}

function score(s: M3Series, point: readonly number[], sd: readonly number[] | null) {
  const scale = protocolScale(s.train, s.seasonLength)
  let mase = 0
  let smape = 0
  let in80 = 0
  let in95 = 0
  for (let k = 0; k < s.h; k++) {
    const y = s.test[k]!
    const f = point[k]!
    mase += Math.abs(y - f) / scale
    const denom = Math.abs(y) + Math.abs(f)
    smape += denom === 0 ? 0 : (200 * Math.abs(y - f)) / denom
    if (sd) {
      if (Math.abs(y - f) <= 1.2815515655446004 * sd[k]!) in80++
      if (Math.abs(y - f) <= 1.959963984540054 * sd[k]!) in95++
    }
  }
  return { mase: mase / s.h, smape: smape / s.h, cov80: sd ? in80 / s.h : NaN, cov95: sd ? in95 / s.h : NaN }
}

const mean = (v: readonly number[]): number => v.reduce((a, b) => a + b, 0) / v.length
function median(v: readonly number[]): number {
  const s = [...v].sort((a, b) => a - b)
  const mid = s.length >> 1
  return s.length % 2 ? s[mid]! : (s[mid - 1]! + s[mid]!) / 2
}

const dataPath = option('data')
if (!dataPath) throw new Error('--data <path to the M3 collection m3.json> is required')
const frequency = option('frequency') ?? 'month'
const every = positiveIntOption('every', 1)
const all = JSON.parse(readFileSync(dataPath, 'utf8')) as M3Series[]
const theta = JSON.parse(readFileSync(join(dirname(dataPath), 'baselines', 'theta.json'), 'utf8')) as Record<string, { point: number[] }>
const series = all.filter((s) => frequency === 'all' || s.frequency === frequency).filter((_, i) => i % every === 0)
const pool: ModelSpec[] = [...thoroughModels, ...MODEL_REGISTRY.filter((m) => m.name === 'theta')]
const wanted = option('models')?.split(',')
const models = wanted ? pool.filter((m) => wanted.includes(m.name)) : pool

const reference = series.map((s) => score(s, theta[s.id]!.point, null))
console.log(`M3 ${frequency}, ${series.length} series (every ${every}); statsmodels Theta on the same series: MASE ${mean(reference.map((r) => r.mase)).toFixed(3)}, sMAPE ${mean(reference.map((r) => r.smape)).toFixed(2)}`)
console.log('| model | ms/series (median) | ms/series (mean) | MASE | MASE / Theta | sMAPE | cov80 | cov95 | failed |')
console.log('|---|---|---|---|---|---|---|---|---|')
for (const spec of models) {
  const ms: number[] = []
  const rows: ReturnType<typeof score>[] = []
  const thetaRows: ReturnType<typeof score>[] = []
  let failed = 0
  series.forEach((s, i) => {
    const t0 = performance.now()
    try {
      const fit = spec.fit(s.train, { seasonLength: s.seasonLength })
      const point = fit.forecast(s.h)
      const variance = fit.forecastVariance?.(s.h) ?? null
      ms.push(performance.now() - t0)
      rows.push(score(s, point, variance ? variance.map(Math.sqrt) : null))
      thetaRows.push(reference[i]!)
    } catch {
      failed++
    }
  })
  const m = mean(rows.map((r) => r.mase))
  const ratio = m / mean(thetaRows.map((r) => r.mase))
  console.log(
    `| ${spec.name} | ${median(ms).toFixed(1)} | ${mean(ms).toFixed(1)} | ${m.toFixed(3)} | ${ratio.toFixed(3)} | ${mean(rows.map((r) => r.smape)).toFixed(2)} | ${mean(rows.map((r) => r.cov80)).toFixed(3)} | ${mean(rows.map((r) => r.cov95)).toFixed(3)} | ${failed} |`,
  )
}
