/**
 * Demo data: invented monthly demand for a regional distributor of garden,
 * heating and workwear supplies. Seeded, so every run writes the same files.
 *
 *   GRD-1xxx  garden items, spring and summer peaks, mild growth
 *   HTG-2xxx  heating items, winter peaks, slow decline
 *   WRK-3xxx  workwear, steady demand with a trend
 *   *-7xxx    slow movers with intermittent demand (spare parts, specials)
 *   *-8xxx    new products: short history that starts with zeros
 *   a few series carry null gaps (months missing from the old warehouse system)
 *
 * Writes demo/run-request.json (POST /v1/runs body, ~300 series, horizon 6) and
 * demo/small-request.json (POST /v1/forecast body, 4 series).
 * Usage: npm run demo:data
 */
import { writeFileSync } from 'node:fs'
import { dirname, join } from 'node:path'
import { fileURLToPath } from 'node:url'
import { createRandom, normalDraw } from '../scripts/seeded-random.js'

const SEED = 424242
const LAST_YEAR = 2025 // every series ends in December 2025
const HORIZON = 6

const random = createRandom(SEED)
const uniform = (low: number, high: number): number => low + (high - low) * random()
const integer = (low: number, high: number): number => Math.floor(uniform(low, high + 1))

const normal = (): number => normalDraw(random)

/** Poisson draw: Knuth's product method for small means, normal approximation above 30. */
function poisson(mean: number): number {
  if (mean <= 0) return 0
  if (mean > 30) return Math.max(0, Math.round(mean + Math.sqrt(mean) * normal()))
  const limit = Math.exp(-mean)
  let k = 0
  let product = random()
  while (product > limit) {
    k += 1
    product *= random()
  }
  return k
}

/** Monthly profiles, January first, scaled to mean 1. Invented shapes. */
function profile(shape: readonly number[]): number[] {
  const mean = shape.reduce((a, b) => a + b, 0) / shape.length
  return shape.map((v) => v / mean)
}
const GARDEN = profile([0.3, 0.45, 0.9, 1.6, 1.9, 1.7, 1.4, 1.0, 0.7, 0.5, 0.35, 0.4])
const HEATING = profile([1.8, 1.6, 1.2, 0.7, 0.4, 0.3, 0.3, 0.4, 0.8, 1.3, 1.6, 1.8])
const WORKWEAR = profile([1.0, 1.0, 1.05, 1.0, 0.95, 0.9, 0.9, 1.05, 1.15, 1.05, 1.0, 0.95])
const FLAT = profile(Array.from({ length: 12 }, () => 1))

interface DemoSeries {
  sku: string
  firstPeriod: string
  demand: (number | null)[]
}

function startLabel(months: number): string {
  const first = LAST_YEAR * 12 + 12 - months // months before January of LAST_YEAR + 1
  return `${Math.floor(first / 12)}-${String((first % 12) + 1).padStart(2, '0')}`
}

function regular(sku: string, months: number, level: number, monthlyGrowth: number,
  season: readonly number[], seasonStrength: number): DemoSeries {
  const start = startLabel(months)
  const firstMonth = Number(start.slice(5, 7)) - 1
  const values: number[] = []
  for (let t = 0; t < months; t++) {
    const s = 1 + seasonStrength * (season[(firstMonth + t) % 12]! - 1)
    const mean = level * Math.pow(1 + monthlyGrowth, t) * s * Math.exp(0.08 * normal())
    values.push(poisson(mean))
  }
  return { sku, firstPeriod: start, demand: values }
}

function slowMover(sku: string, months: number): DemoSeries {
  const chance = uniform(0.12, 0.4)
  const size = uniform(1, 4)
  const values: number[] = []
  for (let t = 0; t < months; t++) values.push(random() < chance ? 1 + poisson(size - 1) : 0)
  return { sku, firstPeriod: startLabel(months), demand: values }
}

function newProduct(sku: string, season: readonly number[], level: number): DemoSeries {
  const months = integer(24, 36)
  const zeros = integer(4, 14) // catalogue opened before the first sale
  const base = regular(sku, months, level, 0.01, season, 0.8)
  base.demand = base.demand.map((v, t) => {
    if (t < zeros) return 0
    const ramp = Math.min(1, (t - zeros + 1) / 6) // six-month launch ramp
    return Math.round((v ?? 0) * ramp)
  })
  return base
}

function build(): DemoSeries[] {
  const out: DemoSeries[] = []
  for (let i = 0; i < 110; i++) {
    out.push(regular(`GRD-${1001 + i}`, integer(24, 60), uniform(8, 400), uniform(-0.002, 0.006),
      GARDEN, uniform(0.6, 1.1)))
  }
  for (let i = 0; i < 80; i++) {
    out.push(regular(`HTG-${2001 + i}`, integer(30, 60), uniform(10, 300), uniform(-0.008, -0.001),
      HEATING, uniform(0.7, 1.1)))
  }
  for (let i = 0; i < 78; i++) {
    out.push(regular(`WRK-${3001 + i}`, integer(24, 60), uniform(15, 250), uniform(-0.003, 0.012),
      i % 3 === 0 ? FLAT : WORKWEAR, 1))
  }
  const prefixes = ['GRD', 'HTG', 'WRK']
  for (let i = 0; i < 20; i++) out.push(slowMover(`${prefixes[i % 3]}-${7001 + i}`, integer(36, 60)))
  const seasons = [GARDEN, HEATING, WORKWEAR]
  for (let i = 0; i < 12; i++) {
    out.push(newProduct(`${prefixes[i % 3]}-${8001 + i}`, seasons[i % 3]!, uniform(20, 150)))
  }
  // Null gaps: months lost in a warehouse system change (invented), on a few long series.
  for (const sku of ['GRD-1003', 'HTG-2005', 'WRK-3010']) {
    const series = out.find((s) => s.sku === sku)
    if (!series || series.demand.length < 30) continue
    const at = series.demand.length - integer(14, 20)
    series.demand[at] = null
    if (sku === 'HTG-2005') series.demand[at + 1] = null
  }
  return out
}

const here = dirname(fileURLToPath(import.meta.url))
const series = build()
const settings = { horizon: HORIZON, frequency: 'month', intervalLevels: [80, 95], rankBy: 'mase' }
const write = (file: string, body: unknown): void => {
  writeFileSync(join(here, file), JSON.stringify(body) + '\n')
}
write('run-request.json', { ...settings, series })
write('small-request.json', {
  ...settings,
  series: ['GRD-1001', 'HTG-2001', 'WRK-3002', 'WRK-7003'].map((sku) => series.find((s) => s.sku === sku)),
})
process.stdout.write(`wrote ${series.length} series to demo/run-request.json and 4 to demo/small-request.json\n`)
