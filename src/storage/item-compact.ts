import {
  METRIC_NAMES,
  type ForecastPoint,
  type MetricSet,
  type ModelParams,
  type ReplenishmentFigures,
} from '../engine/index.js'
import { EXACT, REPLENISHMENT_FIELDS, knownModel, r4, r7 } from './item-common.js'
import type { ResultItem, StoredLeaderboardEntry } from './types.js'

/**
 * Compact form of one SKU's result (storage format 0x01, written by earlier
 * versions and still read; `storeItem` now writes servedBody, format 0x02,
 * item-served.ts). A JSON array instead of objects, metric sets as arrays in METRIC_NAMES
 * order, and rounded numbers: forecasts, bounds and parameters keep 7
 * significant digits (relative change below 1e-6), error measures 4 (enough to
 * compare models); servedBody rounds the same way. The sku is not stored: it
 * is the hash field.
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
