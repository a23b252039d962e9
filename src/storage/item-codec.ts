import { deflateRawSync, inflateRawSync } from 'node:zlib'
import {
  METRIC_NAMES,
  findModel,
  type ForecastPoint,
  type MetricSet,
  type ModelName,
  type ModelParams,
  type ReplenishmentFigures,
} from '../engine/index.js'
import type { ResultItem, StoredLeaderboardEntry } from './types.js'

/**
 * Compact storage form of one SKU's result (the run store keeps thousands per
 * run). A JSON array instead of objects, metric sets as arrays in METRIC_NAMES
 * order, and rounded numbers: forecasts, bounds and parameters keep 7
 * significant digits (relative change below 1e-6), error measures 4 (enough to
 * compare models). The sku is not stored: it is the hash field. `storeItem`
 * compresses the JSON for Redis.
 *
 *   [2, model, family, params, selection, metrics, leaderboard, forecast, intervals, warnings]
 *   [2, ..., warnings, replenishment?]               replenishment: [leadTime, serviceLevel, leadTimeDemand,
 *                                                    sigma, z, safetyStock, reorderPoint, formula] when asked for
 *   [2, 'error', code, message]                     for a series the engine rejected
 *   forecast:    [periods[], values[], {level: lower[]}, {level: upper[]}]
 *   leaderboard: [[model, family|0, status, metrics|null, score|null|'m', reason|null], ...]
 *                family 0: the model's own family; score 'm': equal to metrics[selection metric]
 *                A model this process does not know (written by another version) is read
 *                with its name as stored and family 'unknown' when stored as 0.
 */
const VERSION = 2

const POWERS_OF_TEN = Array.from({ length: 23 }, (_, i) => 10 ** i)

/**
 * x to `digits` significant digits: the same values as Number(x.toPrecision(digits))
 * (checked on 2,000,000 random values of magnitude 1e-6 to 1e10 and on decimal
 * ties, 4 and 7 digits) at about a quarter of the cost. Each stored item rounds a
 * few hundred numbers; toPrecision took a third of encodeItem's time (bench:e2e
 * worker profile). Powers of ten up to 1e22 are exact doubles, so the scaled value
 * is rounded once; when it lands exactly on .5, the binary value decides, so
 * toPrecision (which rounds the exact binary value) answers.
 */
export function round(x: number, digits: number): number {
  if (!Number.isFinite(x) || x === 0) return x
  const a = Math.abs(x)
  const p = digits - 1 - Math.floor(Math.log10(a))
  let r = NaN
  if (p >= 0 && p <= 22) {
    const s = a * POWERS_OF_TEN[p]!
    if (s - Math.floor(s) !== 0.5) r = Math.round(s) / POWERS_OF_TEN[p]!
  } else if (p < 0 && p >= -22) {
    const s = a / POWERS_OF_TEN[-p]!
    if (s - Math.floor(s) !== 0.5) r = Math.round(s) * POWERS_OF_TEN[-p]!
  }
  if (Number.isNaN(r)) r = Number(a.toPrecision(digits))
  return x < 0 ? -r : r
}
const r7 = (x: number) => round(x, 7)
const r4 = (x: number) => round(x, 4)

const packMetrics = (m: MetricSet | null | undefined) => (m ? METRIC_NAMES.map((k) => (m[k] === null ? null : r4(m[k]!))) : null)

function unpackMetrics(a: readonly (number | null)[] | null): MetricSet | null {
  if (a === null) return null
  const m = {} as Record<(typeof METRIC_NAMES)[number], number | null>
  for (let i = 0; i < METRIC_NAMES.length; i++) m[METRIC_NAMES[i]!] = a[i] ?? null
  return m
}

function packParams(p: ModelParams): Record<string, number | number[]> {
  return Object.fromEntries(Object.entries(p).map(([k, v]) => [k, typeof v === 'number' ? r7(v) : v.map(r7)]))
}

const mapBounds = (points: readonly ForecastPoint[], side: 'lower' | 'upper') => {
  const levels = Object.keys(points[0]?.[side] ?? {})
  return Object.fromEntries(levels.map((l) => [l, points.map((p) => r7(p[side][l]!))]))
}

/** The registered model of that name, or undefined for a name this process does not know. */
const knownModel = (name: string) => findModel(name as ModelName)

function packEntry(e: StoredLeaderboardEntry, metric: (typeof METRIC_NAMES)[number]) {
  const family = knownModel(e.model)?.family === e.family ? 0 : e.family
  const score = e.score === undefined ? null : e.metrics && e.metrics[metric] === e.score ? 'm' : r4(e.score)
  return [e.model, family, e.status, packMetrics(e.metrics), score, e.reason ?? null]
}

function unpackEntry(e: any[], metric: (typeof METRIC_NAMES)[number]): StoredLeaderboardEntry {
  const metrics = unpackMetrics(e[3])
  const score = e[4] === 'm' ? metrics?.[metric] : e[4]
  // Plain assignments rather than spreads: results pages decode up to 1000 items.
  const entry: { -readonly [K in keyof StoredLeaderboardEntry]: StoredLeaderboardEntry[K] } = {
    model: e[0],
    family: e[1] === 0 ? (knownModel(e[0])?.family ?? 'unknown') : e[1],
    status: e[2],
  }
  if (metrics !== null) entry.metrics = metrics
  if (score !== null && score !== undefined) entry.score = score
  if (e[5] !== null) entry.reason = e[5]
  return entry
}

export function encodeItem(item: ResultItem): string {
  if ('error' in item) return JSON.stringify([VERSION, 'error', item.error.code, item.error.message])
  const s = item.selection
  return JSON.stringify([
    VERSION,
    item.model,
    item.family,
    packParams(item.params),
    [s.method, s.metric, s.holdout, s.origins],
    packMetrics(item.metrics),
    item.leaderboard.map((e) => packEntry(e, s.metric)),
    [item.forecast.map((p) => p.period), item.forecast.map((p) => r7(p.value)), mapBounds(item.forecast, 'lower'), mapBounds(item.forecast, 'upper')],
    [item.intervals.method, item.intervals.levels, item.intervals.clamped],
    item.warnings.map((w) => [w.code, w.message]),
    // Optional 11th element (absent in items stored before replenishment figures existed).
    ...(item.replenishment ? [packReplenishment(item.replenishment)] : []),
  ])
}

const REPLENISHMENT_FIELDS = ['leadTime', 'serviceLevel', 'leadTimeDemand', 'sigma', 'z', 'safetyStock', 'reorderPoint'] as const

/** Options and z kept exactly; the figures to 7 significant digits like forecasts. */
const EXACT = new Set<string>(['leadTime', 'serviceLevel', 'z'])

function packReplenishment(r: ReplenishmentFigures): (number | string | null)[] {
  const packed = REPLENISHMENT_FIELDS.map((k) => {
    const v = r[k]
    return v === null || EXACT.has(k) ? v : r7(v)
  })
  return [...packed, r.formula]
}

function unpackReplenishment(a: readonly (number | string | null)[]): ReplenishmentFigures {
  const o = Object.fromEntries(REPLENISHMENT_FIELDS.map((k, i) => [k, a[i]]))
  return { ...o, formula: a[REPLENISHMENT_FIELDS.length] } as unknown as ReplenishmentFigures
}


export function decodeItem(sku: string, json: string): ResultItem {
  const a = JSON.parse(json) as any[]
  if (a[0] !== VERSION) throw new Error(`stored result of ${sku} has unknown format ${String(a[0])}`)
  if (a[1] === 'error') return { sku, error: { code: a[2], message: a[3] } }
  const [, model, family, params, sel, metrics, board, fc, iv, warnings, repl] = a
  const [periods, values, lower, upper] = fc as [string[], number[], Record<string, number[]>, Record<string, number[]>]
  const lowerLevels = Object.keys(lower)
  const upperLevels = Object.keys(upper)
  const bound = (side: Record<string, number[]>, levels: readonly string[], i: number) => {
    const b: Record<string, number> = {}
    for (const l of levels) b[l] = side[l]![i]!
    return b
  }
  return {
    sku,
    model,
    family,
    params,
    selection: { method: sel[0], metric: sel[1], holdout: sel[2], origins: sel[3] },
    metrics: unpackMetrics(metrics),
    leaderboard: (board as any[]).map((e) => unpackEntry(e, sel[1])),
    forecast: periods.map((period, i) => ({ period, value: values[i]!, lower: bound(lower, lowerLevels, i), upper: bound(upper, upperLevels, i) })),
    intervals: { method: iv[0], levels: iv[1], clamped: iv[2] },
    warnings: (warnings as [string, string][]).map(([code, message]) => ({ code, message })),
    ...(Array.isArray(repl) ? { replenishment: unpackReplenishment(repl) } : {}),
  }
}

/**
 * Bytes kept in Redis per item: a one-byte header, then the compact JSON
 * compressed with raw DEFLATE (RFC 1951), about a third of the JSON's size.
 * Header 0x01: deflated. A value starting with `[` is plain JSON.
 */
const DEFLATED = 0x01

export function storeItem(item: ResultItem): Buffer {
  return Buffer.concat([Buffer.of(DEFLATED), deflateRawSync(encodeItem(item))])
}

export function loadItem(sku: string, stored: Buffer): ResultItem {
  const json = stored[0] === DEFLATED ? inflateRawSync(stored.subarray(1)).toString('utf8') : stored.toString('utf8')
  return decodeItem(sku, json)
}
