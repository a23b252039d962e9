import { z } from 'zod'
import { decodeJson } from '../decode.js'
import { formatPeriod, parsePeriod, type ForecastPoint, type Frequency } from '../../engine/index.js'
import { round } from './item-common.js'
import { isValidRunId } from '../keys.js'

/**
 * A SKU's latest-forecast record: the field value of the tenant's `latest` hash.
 *
 *   `${createdAtMs}|${runId}|${producedAt}|${points}`
 *
 * createdAtMs orders runs (the Lua script in scripts.ts compares the first two
 * fields: newest createdAt wins, ties go to the larger run id); producedAt is the
 * ISO time the chunk was committed. `points` is the point forecast, kept so that
 * accuracy scoring still has it after the run's results have expired:
 *
 *   `${code}:${firstLabel}:${v1},${v2},...`   consecutive labels of one frequency
 *                                             (code d, w, m, q, y) or period numbers (n):
 *                                             the labels are regenerated from the first
 *   `j:${JSON [labels, values]}`              any other labels
 *
 * Values keep 7 significant digits, as stored results do; a value that is not
 * finite is written empty and read as no point.
 */
export interface LatestRecord {
  readonly createdAtMs: number
  readonly runId: string
  readonly producedAt: string
  /** The encoded points (decodePoints). */
  readonly points: string
}

/** A SKU's latest forecast as accuracy scoring reads it: its run and the point forecast per period label. */
export interface ForecastPoints {
  readonly runId: string
  readonly points: ReadonlyMap<string, number>
}

/** One of a SKU's kept published forecasts: ForecastPoints plus when its run was created. */
export interface PublishedPoints extends ForecastPoints {
  readonly createdAtMs: number
}

const CODES: Readonly<Record<Frequency, string>> = { day: 'd', week: 'w', month: 'm', quarter: 'q', year: 'y' }
const FREQUENCY_OF: Readonly<Record<string, Frequency>> = { d: 'day', w: 'week', m: 'month', q: 'quarter', y: 'year' }

/** The frequency a label's shape suggests (parsePeriod then decides). */
function shapeFrequency(label: string): Frequency | null {
  switch (label.length) {
    case 4:
      return 'year'
    case 7:
      return label[5] === 'Q' ? 'quarter' : 'month'
    case 8:
      return 'week'
    case 10:
      return 'day'
    default:
      return null
  }
}

const NUMBER = /^[1-9][0-9]{0,14}$/

/** Label i of a run of consecutive labels starting at `first`, per code. */
function labelAt(code: string, first: string, i: number, firstOrdinal: number): string {
  if (code === 'n') return String(firstOrdinal + i)
  return formatPeriod(firstOrdinal + i, FREQUENCY_OF[code]!)
}

function ordinalOf(code: string, first: string): number {
  if (code === 'n') {
    if (!NUMBER.test(first)) throw new Error(`not a period number: ${first}`)
    return Number(first)
  }
  const frequency = FREQUENCY_OF[code]
  if (frequency === undefined) throw new Error(`unknown period code ${code}`)
  return parsePeriod(first, frequency)
}

/** The code under which `labels` are consecutive, or null. */
function consecutiveCode(labels: readonly string[]): string | null {
  const first = labels[0]
  if (first === undefined) return null
  const frequency = shapeFrequency(first)
  for (const code of frequency === null ? ['n'] : [CODES[frequency], 'n']) {
    try {
      const ordinal = ordinalOf(code, first)
      if (labels.every((label, i) => labelAt(code, first, i, ordinal) === label)) return code
    } catch {
      // Not this code (wrong shape, or beyond the years periods allow).
    }
  }
  return null
}

const value7 = (v: number) => (Number.isFinite(v) ? String(round(v, 7)) : '')

/** The `points` field of a record. */
export function encodePoints(forecast: readonly Pick<ForecastPoint, 'period' | 'demand'>[]): string {
  const labels = forecast.map((p) => p.period)
  const code = consecutiveCode(labels)
  if (code === null) return `j:${JSON.stringify([labels, forecast.map((p) => (Number.isFinite(p.demand) ? round(p.demand, 7) : null))])}`
  return `${code}:${labels[0]}:${forecast.map((p) => value7(p.demand)).join(',')}`
}

/** The `j:` form of a points field: labels and values side by side. */
const LabelledPoints = z.tuple([z.array(z.string()), z.array(z.number().nullable())])

/**
 * The point forecast per period label of a `points` field. Points without a finite value are left out.
 * @throws Error on a field this codec did not write.
 */
export function decodePoints(points: string): Map<string, number> {
  const out = new Map<string, number>()
  if (points.startsWith('j:')) {
    const [labels, values] = decodeJson(LabelledPoints, points.slice(2), 'forecast points')
    labels.forEach((label, i) => {
      const v = values[i]
      if (typeof v === 'number' && Number.isFinite(v)) out.set(label, v)
    })
    return out
  }
  const code = points[0] ?? ''
  const end = points.indexOf(':', 2)
  if (points[1] !== ':' || end < 0) throw new Error('malformed forecast points')
  const first = points.slice(2, end)
  const ordinal = ordinalOf(code, first)
  points
    .slice(end + 1)
    .split(',')
    .forEach((text, i) => {
      const v = Number(text)
      if (text !== '' && Number.isFinite(v)) out.set(labelAt(code, first, i, ordinal), v)
    })
  return out
}

/** The part of a record after the ordering fields: `${producedAt}|${points}` (the Lua script prepends the rest). */
export function recordTail(producedAt: string, points: string): string {
  return `${producedAt}|${points}`
}

/** A record, or null when it is malformed. */
export function decodeLatest(value: string): LatestRecord | null {
  const a = value.indexOf('|')
  const b = a < 0 ? -1 : value.indexOf('|', a + 1)
  const c = b < 0 ? -1 : value.indexOf('|', b + 1)
  if (c < 0) return null
  const createdAtMs = Number(value.slice(0, a))
  const runId = value.slice(a + 1, b)
  const producedAt = value.slice(b + 1, c)
  if (!Number.isFinite(createdAtMs) || !isValidRunId(runId) || producedAt === '') return null
  return { createdAtMs, runId, producedAt, points: value.slice(c + 1) }
}

/**
 * A SKU's field of the `published` hash: its kept published forecasts, newest
 * first (one record per line, each as a `latest` record). Records that do not
 * decode are left out.
 */
export function decodePublished(value: string): PublishedPoints[] {
  const out: PublishedPoints[] = []
  for (const line of value.split('\n')) {
    const record = decodeLatest(line)
    if (record === null) continue
    try {
      out.push({ runId: record.runId, createdAtMs: record.createdAtMs, points: decodePoints(record.points) })
    } catch {
      // A points field this codec did not write: that forecast cannot be scored.
    }
  }
  return out
}
