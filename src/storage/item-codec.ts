import { deflateRawSync, inflateRawSync } from 'node:zlib'
import {
  METRIC_NAMES,
  findModel,
  type ForecastPoint,
  type LeaderboardEntry,
  type MetricSet,
  type ModelParams,
  type ReplenishmentFigures,
} from '../engine/index.js'
import type { ResultItem } from './types.js'

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
 */
const VERSION = 2

const round = (x: number, digits: number): number => (Number.isFinite(x) && x !== 0 ? Number(x.toPrecision(digits)) : x)
const r7 = (x: number) => round(x, 7)
const r4 = (x: number) => round(x, 4)

const packMetrics = (m: MetricSet | null | undefined) => (m ? METRIC_NAMES.map((k) => (m[k] === null ? null : r4(m[k]!))) : null)

function unpackMetrics(a: readonly (number | null)[] | null): MetricSet | null {
  if (a === null) return null
  return Object.fromEntries(METRIC_NAMES.map((k, i) => [k, a[i] ?? null])) as Record<(typeof METRIC_NAMES)[number], number | null>
}

function packParams(p: ModelParams): Record<string, number | number[]> {
  return Object.fromEntries(Object.entries(p).map(([k, v]) => [k, typeof v === 'number' ? r7(v) : v.map(r7)]))
}

const mapBounds = (points: readonly ForecastPoint[], side: 'lower' | 'upper') => {
  const levels = Object.keys(points[0]?.[side] ?? {})
  return Object.fromEntries(levels.map((l) => [l, points.map((p) => r7(p[side][l]!))]))
}

function packEntry(e: LeaderboardEntry, metric: (typeof METRIC_NAMES)[number]) {
  const family = findModel(e.model)?.family === e.family ? 0 : e.family
  const score = e.score === undefined ? null : e.metrics && e.metrics[metric] === e.score ? 'm' : r4(e.score)
  return [e.model, family, e.status, packMetrics(e.metrics), score, e.reason ?? null]
}

function unpackEntry(e: any[], metric: (typeof METRIC_NAMES)[number]): LeaderboardEntry {
  const metrics = unpackMetrics(e[3])
  const score = e[4] === 'm' ? metrics?.[metric] : e[4]
  return {
    model: e[0],
    family: e[1] === 0 ? findModel(e[0])!.family : e[1],
    status: e[2],
    ...(metrics === null ? {} : { metrics }),
    ...(score === null || score === undefined ? {} : { score }),
    ...(e[5] === null ? {} : { reason: e[5] }),
  }
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
  const bound = (side: Record<string, number[]>, i: number) => Object.fromEntries(Object.entries(side).map(([l, v]) => [l, v[i]!]))
  return {
    sku,
    model,
    family,
    params,
    selection: { method: sel[0], metric: sel[1], holdout: sel[2], origins: sel[3] },
    metrics: unpackMetrics(metrics),
    leaderboard: (board as any[]).map((e) => unpackEntry(e, sel[1])),
    forecast: periods.map((period, i) => ({ period, value: values[i]!, lower: bound(lower, i), upper: bound(upper, i) })),
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
