/**
 * The M3 development collection (bench/data/m3, sources in its README.md) and the
 * series sets the competition benchmark runs on.
 */
import { readFileSync } from 'node:fs'
import type { Forecast } from './competition-scoring.js'

export const M3_FREQUENCIES = ['year', 'quarter', 'month', 'other'] as const
export type M3Frequency = (typeof M3_FREQUENCIES)[number]

export interface M3Series {
  readonly id: string
  readonly frequency: M3Frequency
  readonly seasonLength: number
  readonly category: string
  readonly h: number
  readonly train: readonly number[]
  readonly test: readonly number[]
}

export const REFERENCE_METHODS = ['naive2', 'theta', 'comb', 'ets_auto'] as const
export type ReferenceMethod = (typeof REFERENCE_METHODS)[number]

const DATA = new URL('./data/m3/', import.meta.url)

function isNumberArray(v: unknown): v is number[] {
  return Array.isArray(v) && v.every((x) => typeof x === 'number' && Number.isFinite(x))
}

/** The 3,003 series, checked field by field (the file is input like any other). */
export function loadM3(): M3Series[] {
  const raw: unknown = JSON.parse(readFileSync(new URL('m3.json', DATA), 'utf8'))
  if (!Array.isArray(raw)) throw new Error('m3.json: expected an array')
  return raw.map((s: Record<string, unknown>, i) => {
    const frequency = s.frequency as M3Frequency
    if (typeof s.id !== 'string' || !M3_FREQUENCIES.includes(frequency) || typeof s.seasonLength !== 'number' ||
        typeof s.h !== 'number' || !isNumberArray(s.train) || !isNumberArray(s.test) || s.test.length !== s.h) {
      throw new Error(`m3.json: series ${i} is malformed`)
    }
    return { id: s.id, frequency, seasonLength: s.seasonLength, category: String(s.category), h: s.h, train: s.train, test: s.test }
  })
}

/** Reference forecasts by series id (statsmodels 0.13.5, see data/m3/baselines.md). */
export function loadReference(method: ReferenceMethod): Map<string, Forecast> {
  const raw = JSON.parse(readFileSync(new URL(`baselines/${method}.json`, DATA), 'utf8')) as Record<string, Forecast>
  const out = new Map<string, Forecast>()
  for (const [id, f] of Object.entries(raw)) {
    if (![f.point, f.lower80, f.upper80, f.lower95, f.upper95].every(isNumberArray)) throw new Error(`${method}.json: ${id} is malformed`)
    out.set(id, f)
  }
  return out
}

/**
 * The training split: the last h values of each training part become its test part, so
 * choices can be made without looking at M3's test values. Series left with fewer than
 * 8 training values are dropped (none in M3: the shortest training parts, yearly 14 and
 * quarterly 16, keep 8).
 */
export function trainingSplit(series: readonly M3Series[]): M3Series[] {
  return series
    .filter((s) => s.train.length - s.h >= 8)
    .map((s) => ({ ...s, train: s.train.slice(0, -s.h), test: s.train.slice(-s.h) }))
}

/** About `limit` series spread evenly over `series` (every k-th), in order. */
export function spread<T>(series: readonly T[], limit: number): T[] {
  if (limit >= series.length) return series.slice()
  const out: T[] = []
  for (let i = 0; i < limit; i++) out.push(series[Math.floor((i * series.length) / limit)]!)
  return out
}
