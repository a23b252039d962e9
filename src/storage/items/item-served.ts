import { METRIC_NAMES, type Candidate, type ForecastInterval, type MetricSet, type ModelParams } from '../../engine/index.js'
import { EXACT, POWERS_OF_TEN, REPLENISHMENT_FIELDS, REPLENISHMENT_PERIOD_FIELDS, decade, jv, r4, round } from './item-common.js'
import type { ResultItem } from '../../runs/contract.js'

/**
 * The JSON text of an item as served, without its sku: `{"frequency":...,"model":...}`
 * or `{"frequency":...,"failure":...}`. It is JSON.stringify of the item with its
 * numbers rounded (forecasts, interval bounds, parameters and replenishment figures to
 * 7 significant digits, holdout errors and scores to 4) and a non-finite score left
 * out; test/storage/item-served.test.ts holds that reference and checks the two agree
 * byte for byte. Written straight from the engine result, so a results page is the
 * stored text with the sku put in front: no parsing and no objects per item on the
 * API, where decoding and re-serialising pages would cost more than the service spent
 * fitting them.
 */
export function servedBody(item: ResultItem): string {
  return servedBytes(item).toString('utf8')
}

/**
 * servedBody as UTF-8 bytes, written straight into a kept buffer (a view of
 * it, valid until the next call): building the text as a string took hundreds
 * of concatenations per item, and then a copy to encode it for deflate.
 */
export function servedBytes(item: ResultItem): Buffer {
  pos = 0
  text('{"frequency":')
  value(item.frequency)
  if ('failure' in item) {
    text(',"failure":{"code":')
    value(item.failure.code)
    text(',"message":')
    value(item.failure.message)
    text('}}')
    return buf.subarray(0, pos)
  }
  const c = item.modelChoice
  text(',"model":')
  value(item.model)
  text(',"family":')
  value(item.family)
  text(',"params":')
  params(item.params)
  text(',"modelChoice":{"method":')
  value(c.method)
  text(',"rankBy":')
  value(c.rankBy)
  text(',"holdoutPeriods":')
  value(c.holdoutPeriods)
  text(',"holdoutOrigins":')
  value(c.holdoutOrigins)
  if (c.members !== undefined) {
    text(',"members":[')
    for (let i = 0; i < c.members.length; i++) {
      text(i > 0 ? ',{"model":' : '{"model":')
      value(c.members[i]!.model)
      text(',"family":')
      value(c.members[i]!.family)
      text('}')
    }
    text(']')
  }
  text('},"holdoutErrors":')
  errors(item.holdoutErrors)
  text(',"candidates":[')
  const candidates = item.candidates
  for (let i = 0; i < candidates.length; i++) {
    if (i > 0) text(',')
    candidate(candidates[i]!)
  }
  text('],"forecast":[')
  const points = item.forecast
  for (let i = 0; i < points.length; i++) {
    const p = points[i]!
    text(i === 0 ? '{"period":' : ',{"period":')
    value(p.period)
    text(',"demand":')
    rounded(p.demand, 7)
    text(',"intervals":[')
    intervals(p.intervals)
    text(']')
    const qs = p.quantiles
    if (qs) {
      for (let j = 0; j < qs.length; j++) {
        text(j === 0 ? ',"quantiles":[{"quantile":' : ',{"quantile":')
        value(qs[j]!.quantile)
        text(',"demand":')
        rounded(qs[j]!.demand, 7)
        text('}')
      }
      text(qs.length === 0 ? ',"quantiles":[]' : ']')
    }
    text('}')
  }
  text('],"intervalMethod":')
  value(item.intervalMethod)
  text(',"warnings":[')
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
      figure(k, r[k])
    }
    text(',"formula":')
    value(r.formula)
    text(',"periods":[')
    for (let j = 0; j < r.periods.length; j++) {
      const p = r.periods[j]!
      text(j === 0 ? '{"period":' : ',{"period":')
      value(p.period)
      for (const k of REPLENISHMENT_PERIOD_FIELDS) {
        text(`,"${k}":`)
        figure(k, p[k])
      }
      text('}')
    }
    text(']}')
  }
  text('}')
  return buf.subarray(0, pos)
}

/** A replenishment figure: exact when EXACT names it, else to 7 significant digits. */
function figure(k: string, v: number | null): void {
  if (v === null || EXACT.has(k) || typeof v !== 'number') value(v)
  else rounded(v, 7)
}

const CANDIDATES_KEY = Buffer.from(',"candidates":[')

/**
 * A served item's JSON without its `candidates` (the compact view), cut out of
 * the text without parsing it. Inside a JSON string every `"` is escaped, so
 * the first `,"candidates":[` is the key servedBytes wrote; its array ends at
 * the matching `]`, counted with strings skipped. A failed item has no
 * candidates and comes back unchanged.
 */
export function withoutCandidates(body: Buffer): Buffer {
  const start = body.indexOf(CANDIDATES_KEY)
  if (start < 0) return body
  let depth = 0
  for (let i = start + CANDIDATES_KEY.length - 1; i < body.length; i++) {
    const c = body[i]
    if (c === 0x22) {
      for (i++; i < body.length && body[i] !== 0x22; i++) if (body[i] === 0x5c) i++
    } else if (c === 0x5b || c === 0x7b) depth++
    else if ((c === 0x5d || c === 0x7d) && --depth === 0) return Buffer.concat([body.subarray(0, start), body.subarray(i + 1)])
  }
  throw new Error('served item: unterminated candidates array')
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

/**
 * The JSON text of round(x, digits) (null when x is not finite), as the writer
 * below puts it into a served item. Not for use while servedBytes runs (they
 * share the kept buffer; both are synchronous).
 */
export function roundedJson(x: number, digits: number): string {
  pos = 0
  rounded(x, digits)
  return buf.toString('latin1', 0, pos)
}

/**
 * Writes the JSON text of round(x, digits) (for anything but a number: jv of
 * round, so a missing value is null), from the rounded integer mantissa instead of
 * through Number-to-String of the double: that conversion (shortest round-trip
 * digits) was a third of the time of writing an item (bench/RESULTS.md). round's result
 * is the double nearest m * 10^-p (m the rounded integer: one correctly rounded
 * division or product of exact doubles), and no other decimal of at most 8
 * significant digits lies within an ulp of it, so its shortest digits are m's
 * without trailing zeros; the layout follows Number::toString (ECMA-262
 * 6.1.6.1.20). Exponent notation (below 1e-6, from 1e21), decimal ties and
 * values that round beyond the largest double go through round and jv.
 */
function rounded(x: unknown, digits: number): void {
  if (typeof x !== 'number') return text(jv(round(x as number, digits)))
  if (x - x !== 0) return text('null')
  if (x === 0) return text('0')
  const a = x < 0 ? -x : x
  let p = digits - 1 - decade(a)
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
  if (digits > 9) return text(jv(round(x, digits)))
  // m < 10^digits + 1 <= 10^9 < 2^31: int32 arithmetic from here (modulus and division of
  // doubles cost a libm call each; the digits are the same).
  let mi = m | 0
  while (mi % 10 === 0) {
    mi = (mi / 10) | 0
    p--
  }
  let k = 1
  while (k < 10 && mi >= INT_POWERS[k]!) k++
  if (p <= 0 ? k - p > 21 : p >= k && p - k >= 6) return text(jv(round(x, digits)))
  ensure(k + (p <= 0 ? -p : p < k ? 1 : 2 + p - k) + 1)
  if (x < 0) buf[pos++] = 0x2d
  if (p <= 0) {
    digitsAt(mi, pos + k - 1, k)
    pos += k
    for (let z = 0; z < -p; z++) buf[pos++] = 0x30
  } else if (p < k) {
    // k - p integer digits, the point, p decimals
    const end = pos + k + 1
    let t = mi
    let i = end - 1
    for (let j = 0; j < p; j++) {
      const q = (t / 10) | 0
      buf[i--] = 0x30 + t - 10 * q
      t = q
    }
    buf[i--] = 0x2e
    digitsAt(t, i, k - p)
    pos = end
  } else {
    buf[pos++] = 0x30
    buf[pos++] = 0x2e
    for (let z = 0; z < p - k; z++) buf[pos++] = 0x30
    digitsAt(mi, pos + k - 1, k)
    pos += k
  }
}

const INT_POWERS = [1, 10, 100, 1_000, 10_000, 100_000, 1_000_000, 10_000_000, 100_000_000, 1_000_000_000]

/** Writes the n decimal digits of the int32 t ending at index last. */
function digitsAt(t: number, last: number, n: number): void {
  for (let j = 0; j < n; j++) {
    const q = (t / 10) | 0
    buf[last - j] = 0x30 + t - 10 * q
    t = q
  }
}

function errors(m: MetricSet | null | undefined): void {
  if (!m) return text('null')
  for (let i = 0; i < METRIC_NAMES.length; i++) {
    text(METRIC_KEYS[i]!)
    const v = m[METRIC_NAMES[i]!]
    if (v === null) text('null')
    else rounded(v, 4)
  }
  // Interval measures: on the chosen model's row (every row with modelSearch thorough).
  if (m.msis !== undefined) {
    text(',"msis":')
    if (m.msis === null) text('null')
    else rounded(m.msis, 4)
  }
  if (m.pinball !== undefined) {
    text(',"pinball":')
    if (m.pinball === null) text('null')
    else rounded(m.pinball, 4)
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

/** A point's intervals: `{"level":80,"low":...,"high":...}` each. */
function intervals(list: readonly ForecastInterval[]): void {
  for (let i = 0; i < list.length; i++) {
    const iv = list[i]!
    text(i === 0 ? levelPrefix(i, iv.level) : ',' + levelPrefix(i, iv.level))
    rounded(iv.low, 7)
    text(',"high":')
    rounded(iv.high, 7)
    text('}')
  }
}

/**
 * `{"level":80,"low":` for the i-th interval of a point. The levels are the run's, the
 * same on every point, so the text of the last level seen at each position is reused.
 */
function levelPrefix(i: number, level: number): string {
  if (Object.is(prefixLevels[i], level)) return prefixTexts[i]!
  prefixLevels[i] = level
  return (prefixTexts[i] = `{"level":${jv(level)},"low":`)
}
const prefixLevels: number[] = []
const prefixTexts: string[] = []

function candidate(e: Candidate): void {
  text('{"model":')
  value(e.model)
  text(',"family":')
  value(e.family)
  text(',"status":')
  value(e.status)
  if (e.holdoutErrors) {
    text(',"holdoutErrors":')
    errors(e.holdoutErrors)
  }
  // Left out when the rounded score is not a finite number (JSON has no NaN or Infinity).
  // round(score) is finite exactly when its JSON is not null (see rounded), without building the text.
  if (typeof e.score === 'number' && Number.isFinite(r4(e.score))) {
    text(',"score":')
    rounded(e.score, 4)
  }
  if (e.reason !== undefined && e.reason !== null) {
    text(',"reason":')
    value(e.reason)
  }
  text('}')
}

const METRIC_KEYS = METRIC_NAMES.map((k, i) => `${i === 0 ? '{' : ','}${JSON.stringify(k)}:`)
