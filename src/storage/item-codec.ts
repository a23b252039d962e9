import { inflateRawSync } from 'node:zlib'
import { deflateWithHeader, inflateItem } from './item-deflate.js'
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
 * Compact form of one SKU's result (storage format 0x01, written by earlier
 * versions and still read; `storeItem` now writes servedBody, format 0x02,
 * below). A JSON array instead of objects, metric sets as arrays in METRIC_NAMES
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

/**
 * The JSON text of round(x, digits) (null when x is not finite), written from
 * the rounded integer mantissa instead of through Number-to-String of the
 * double: that conversion (shortest round-trip digits) cost ~0.3 us per number,
 * a third of writing an item. round's result is the double nearest m * 10^-p
 * (m the rounded integer: one correctly rounded division or product of exact
 * doubles), and no other decimal of at most 8 significant digits lies within
 * an ulp of it, so its shortest digits are m's without trailing zeros; the
 * layout follows Number::toString (ECMA-262 6.1.6.1.20). Exponent notation
 * (below 1e-6, from 1e21), decimal ties and values that round beyond the
 * largest double go through round and jv.
 */
export function roundedJson(x: number, digits: number): string {
  if (x - x !== 0) return 'null'
  if (x === 0) return '0'
  const a = x < 0 ? -x : x
  let p = digits - 1 - Math.floor(Math.log10(a))
  let m: number
  if (p >= 0 && p <= 22) {
    const s = a * POWERS_OF_TEN[p]!
    if (s - Math.floor(s) === 0.5) return jv(round(x, digits))
    m = Math.round(s)
  } else if (p < 0 && p >= -14) {
    const s = a / POWERS_OF_TEN[-p]!
    if (s - Math.floor(s) === 0.5) return jv(round(x, digits))
    m = Math.round(s)
  } else return jv(round(x, digits))
  while (m % 10 === 0) {
    m /= 10
    p--
  }
  const d = '' + m
  const k = d.length
  let out: string
  if (p <= 0) {
    if (k - p > 21) return jv(round(x, digits))
    out = p === 0 ? d : d + ZEROS.slice(0, -p)
  } else if (p < k) out = d.slice(0, k - p) + '.' + d.slice(k - p)
  else {
    if (p - k >= 6) return jv(round(x, digits))
    out = '0.' + ZEROS.slice(0, p - k) + d
  }
  return x < 0 ? '-' + out : out
}
const ZEROS = '0'.repeat(22)
const j4 = (x: number) => roundedJson(x, 4)

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
 * The JSON text of an item as served (what JSON.stringify(decodeItem(sku,
 * encodeItem(item))) gives, byte for byte) without its sku: `{"model":...}` or
 * `{"error":...}`. Written straight from the engine result with the same
 * rounding as encodeItem, so a results page is the stored text with the sku
 * put in front (no parsing, no objects per item: decoding and re-serialising
 * pages took most of the API's CPU in bench:e2e).
 */
export function servedBody(item: ResultItem): string {
  return servedBytes(item).toString('utf8')
}

/**
 * servedBody as UTF-8 bytes, written straight into a kept buffer (a view of
 * it, valid until the next call): building the text as a string took ~300
 * concatenations per item, and then a copy to encode it for deflate.
 */
function servedBytes(item: ResultItem): Buffer {
  pos = 0
  if ('error' in item) {
    text('{"error":{"code":')
    value(item.error.code)
    text(',"message":')
    value(item.error.message)
    text('}}')
    return buf.subarray(0, pos)
  }
  const s = item.selection
  text('{"model":')
  value(item.model)
  text(',"family":')
  value(item.family)
  text(',"params":')
  params(item.params)
  text(',"selection":{"method":')
  value(s.method)
  text(',"metric":')
  value(s.metric)
  text(',"holdout":')
  value(s.holdout)
  text(',"origins":')
  value(s.origins)
  text('},"metrics":')
  metrics(item.metrics)
  text(',"leaderboard":[')
  const board = item.leaderboard
  for (let i = 0; i < board.length; i++) {
    if (i > 0) text(',')
    entry(board[i]!)
  }
  text('],"forecast":[')
  const points = item.forecast
  const lower = boundKeys(points, 'lower')
  const upper = boundKeys(points, 'upper')
  for (let i = 0; i < points.length; i++) {
    const p = points[i]!
    text(i === 0 ? '{"period":' : ',{"period":')
    value(p.period)
    text(',"value":')
    rounded(p.value, 7)
    text(',"lower":')
    bound(p.lower, lower)
    text(',"upper":')
    bound(p.upper, upper)
    text('}')
  }
  const iv = item.intervals
  text('],"intervals":{"method":')
  value(iv.method)
  text(',"levels":')
  value(iv.levels)
  text(',"clamped":')
  value(iv.clamped)
  text('},"warnings":[')
  for (let i = 0; i < item.warnings.length; i++) {
    const w = item.warnings[i]!
    text(i === 0 ? '{"code":' : ',{"code":')
    value(w.code)
    text(',"message":')
    value(w.message)
    text('}')
  }
  text(']')
  if (item.replenishment) {
    const r = item.replenishment
    for (let i = 0; i < REPLENISHMENT_FIELDS.length; i++) {
      const k = REPLENISHMENT_FIELDS[i]!
      text(i === 0 ? `,"replenishment":{"${k}":` : `,"${k}":`)
      const v = r[k]
      if (v === null || EXACT.has(k) || typeof v !== 'number') value(v === null || EXACT.has(k) ? v : r7(v))
      else rounded(v, 7)
    }
    text(',"formula":')
    value(r.formula)
    text('}')
  }
  text('}')
  return buf.subarray(0, pos)
}

let buf = Buffer.allocUnsafe(64 * 1024)
let pos = 0

function ensure(n: number): void {
  if (pos + n <= buf.length) return
  const grown = Buffer.allocUnsafe(Math.max(2 * buf.length, pos + n))
  buf.copy(grown, 0, 0, pos)
  buf = grown
}

/** Writes JS text (ASCII literals, or any string: UTF-8). */
function text(s: string): void {
  ensure(3 * s.length)
  if (s.length <= 24) {
    let ascii = true
    for (let i = 0; i < s.length; i++) {
      const c = s.charCodeAt(i)
      if (c > 0x7e) {
        ascii = false
        break
      }
      buf[pos + i] = c
    }
    if (ascii) {
      pos += s.length
      return
    }
  }
  pos += buf.write(s, pos, 'utf8')
}

/** Writes a value as jv would (strings through the quoted cache). */
function value(v: unknown): void {
  if (typeof v === 'string') {
    let bytes = QUOTED_BYTES.get(v)
    if (bytes === undefined) {
      bytes = Buffer.from(JSON.stringify(v), 'utf8')
      if (QUOTED_BYTES.size >= 4096) QUOTED_BYTES.clear()
      if (v.length <= 256) QUOTED_BYTES.set(v, bytes)
    }
    ensure(bytes.length)
    if (bytes.length <= 32) for (let i = 0; i < bytes.length; i++) buf[pos + i] = bytes[i]!
    else bytes.copy(buf, pos)
    pos += bytes.length
    return
  }
  text(jv(v))
}

/** Quoted UTF-8 of strings that repeat from item to item (names, statuses, reasons, periods); bounded. */
const QUOTED_BYTES = new Map<string, Buffer>()

/** Writes roundedJson(x, digits) (for anything but a number: jv of round, as encodeItem stored it). */
function rounded(x: unknown, digits: number): void {
  if (typeof x !== 'number') return text(jv(round(x as number, digits)))
  if (x - x !== 0) return text('null')
  if (x === 0) return text('0')
  const a = x < 0 ? -x : x
  let p = digits - 1 - Math.floor(Math.log10(a))
  let m: number
  if (p >= 0 && p <= 22) {
    const s = a * POWERS_OF_TEN[p]!
    if (s - Math.floor(s) === 0.5) return text(jv(round(x, digits)))
    m = Math.round(s)
  } else if (p < 0 && p >= -14) {
    const s = a / POWERS_OF_TEN[-p]!
    if (s - Math.floor(s) === 0.5) return text(jv(round(x, digits)))
    m = Math.round(s)
  } else return text(jv(round(x, digits)))
  while (m % 10 === 0) {
    m /= 10
    p--
  }
  let k = 1
  while (k < 22 && m >= POWERS_OF_TEN[k]!) k++
  if (p <= 0 ? k - p > 21 : p >= k && p - k >= 6) return text(jv(round(x, digits)))
  ensure(k + (p <= 0 ? -p : p < k ? 1 : 2 + p - k) + 1)
  if (x < 0) buf[pos++] = 0x2d
  if (p <= 0) {
    digitsAt(m, pos + k - 1, k)
    pos += k
    for (let z = 0; z < -p; z++) buf[pos++] = 0x30
  } else if (p < k) {
    // k - p integer digits, the point, p decimals
    const end = pos + k + 1
    let t = m
    let i = end - 1
    for (let j = 0; j < p; j++) {
      const d = t % 10
      buf[i--] = 0x30 + d
      t = (t - d) / 10
    }
    buf[i--] = 0x2e
    digitsAt(t, i, k - p)
    pos = end
  } else {
    buf[pos++] = 0x30
    buf[pos++] = 0x2e
    for (let z = 0; z < p - k; z++) buf[pos++] = 0x30
    digitsAt(m, pos + k - 1, k)
    pos += k
  }
}

/** Writes the n decimal digits of integer t ending at index last. */
function digitsAt(t: number, last: number, n: number): void {
  for (let j = 0; j < n; j++) {
    const d = t % 10
    buf[last - j] = 0x30 + d
    t = (t - d) / 10
  }
}

function metrics(m: MetricSet | null | undefined): void {
  if (!m) return text('null')
  for (let i = 0; i < METRIC_NAMES.length; i++) {
    text(METRIC_KEYS[i]!)
    const v = m[METRIC_NAMES[i]!]
    if (v === null) text('null')
    else rounded(v, 4)
  }
  text('}')
}

function params(p: ModelParams): void {
  let first = true
  for (const k in p) {
    if (!Object.prototype.hasOwnProperty.call(p, k)) continue
    const v = (p as Record<string, number | readonly number[]>)[k]!
    text(first ? '{' : ',')
    first = false
    value(k)
    text(':')
    if (typeof v === 'number') rounded(v, 7)
    else {
      text('[')
      for (let i = 0; i < v.length; i++) {
        if (i > 0) text(',')
        rounded(v[i], 7)
      }
      text(']')
    }
  }
  text(first ? '{}' : '}')
}

function bound(b: Readonly<Record<string, number>>, keys: readonly [string, string][]): void {
  text('{')
  for (let i = 0; i < keys.length; i++) {
    if (i > 0) text(',')
    text(keys[i]![1])
    rounded(b[keys[i]![0]], 7)
  }
  text('}')
}

function entry(e: StoredLeaderboardEntry): void {
  text('{"model":')
  value(e.model)
  text(',"family":')
  value(e.family)
  text(',"status":')
  value(e.status)
  if (e.metrics) {
    text(',"metrics":')
    metrics(e.metrics)
  }
  // Left out when the rounded score is not a finite number (stored as null before).
  if (typeof e.score === 'number' && j4(e.score) !== 'null') {
    text(',"score":')
    rounded(e.score, 4)
  } else if (e.score !== undefined && typeof e.score !== 'number') {
    const j = jv(r4(e.score))
    if (j !== 'null') text(`,"score":${j}`)
  }
  if (e.reason !== undefined && e.reason !== null) {
    text(',"reason":')
    value(e.reason)
  }
  text('}')
}

/** A value as JSON.stringify writes it inside an array: undefined, NaN and Infinity as null. */
function jv(v: unknown): string {
  if (typeof v === 'number') return v - v === 0 ? '' + v : 'null'
  if (typeof v === 'string') return quoted(v)
  const s = JSON.stringify(v)
  return s === undefined ? 'null' : s
}


/**
 * JSON.stringify of a string, remembered: model names, families, statuses,
 * reasons and period labels repeat from item to item. Bounded: cleared when full.
 */
const QUOTED = new Map<string, string>()
function quoted(s: string): string {
  let q = QUOTED.get(s)
  if (q === undefined) {
    if (QUOTED.size >= 4096) QUOTED.clear()
    q = JSON.stringify(s)
    if (s.length <= 256) QUOTED.set(s, q)
  }
  return q
}

const METRIC_KEYS = METRIC_NAMES.map((k, i) => `${i === 0 ? '{' : ','}${JSON.stringify(k)}:`)



/** `"level":` prefixes of the first point's bounds (encodeItem keeps the levels of the first point). */
function boundKeys(points: readonly ForecastPoint[], side: 'lower' | 'upper'): [string, string][] {
  return Object.keys(points[0]?.[side] ?? {}).map((l) => [l, JSON.stringify(l) + ':'])
}




/**
 * Bytes kept in Redis per item: a one-byte header, then the item compressed
 * with raw DEFLATE (RFC 1951).
 *   0x02: servedBody, compressed with the preset dictionary ITEM_DICTIONARY
 *         (item-dictionary.ts; about 40% smaller than without it).
 *   0x01: encodeItem's compact JSON, no dictionary (written until format 0x02).
 *   `[`:  encodeItem's compact JSON, not compressed.
 */
const DEFLATED = 0x01
const SERVED = 0x02

export function storeItem(item: ResultItem): Buffer {
  return deflateWithHeader(SERVED, servedBytes(item))
}

/**
 * The served JSON of a stored item, sku first, as UTF-8 bytes in two parts
 * (equal to JSON.stringify(loadItem(sku, stored)) when concatenated).
 */
export function servedItemParts(sku: string, stored: Buffer): [Buffer, Buffer] {
  if (stored[0] !== SERVED) return [Buffer.from(JSON.stringify(loadItem(sku, stored)), 'utf8'), EMPTY]
  const body = inflateItem(stored.subarray(1))
  // The body's '{' becomes the comma after the sku.
  body[0] = 0x2c
  return [Buffer.from(`{"sku":${JSON.stringify(sku)}`, 'utf8'), body]
}

const EMPTY = Buffer.alloc(0)

/** servedItemParts as one buffer. */
export function servedItemJson(sku: string, stored: Buffer): Buffer {
  return Buffer.concat(servedItemParts(sku, stored))
}

export function loadItem(sku: string, stored: Buffer): ResultItem {
  if (stored[0] === SERVED) return JSON.parse(`{"sku":${JSON.stringify(sku)},${inflateItem(stored.subarray(1)).toString('utf8', 1)}`) as ResultItem
  const json = stored[0] === DEFLATED ? inflateRawSync(stored.subarray(1)).toString('utf8') : stored.toString('utf8')
  return decodeItem(sku, json)
}
