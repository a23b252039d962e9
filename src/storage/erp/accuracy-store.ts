import { z } from 'zod'
import type { RedisClient } from '../redis.js'
import { countOf, decodeJson, finiteOf } from '../decode.js'
import {
  formatPeriod,
  pairsAtLag,
  parsePeriod,
  summariseAccuracy,
  type AccuracySummary,
  type Frequency,
  type IssuedForecast,
  type TrackingOptions,
} from '../../engine/index.js'
import { decodeCursor, encodeCursor } from '../paging.js'
import { REVIEW_STATES, type Review, type ReviewState } from '../../runs/review.js'
import { accuracyBase, isValidTenant } from '../keys.js'
import type { PublishedPoints } from '../items/latest-record.js'
import type { RunStore } from '../runs/run-store.js'
import type { ClosedOrdinals, ClosingStore } from './closing-store.js'

/**
 * Realised accuracy per SKU: each closed period of a SKU's stored history,
 * scored against the newest published forecast that covered it (kept in the
 * run store's published list, which outlives run results). What-if runs are
 * never published, so never scored.
 *
 *   acc:p:<b64url(sku)>   hash  period -> `${runId}|${forecast}|${actual}` (one record per period)
 *   acc:summary           hash  sku -> JSON AccuracySummary + updatedAt
 *   acc:exceptions        zset  SKUs flagged by a tracking signal, score 0 (lex order)
 *   acc:review            hash  sku -> JSON review state of a flagged SKU (acknowledged / snoozed)
 *   acc:from              hash  sku -> period label: only later periods are scored (a reset)
 *
 * under `${prefix}:t:${tenant}:`, no TTL. The records follow the stored history:
 * every write of a SKU's history rescores it (the script below), so a corrected
 * actual replaces the old one (keeping the forecast it was first scored against),
 * a period made missing (null) or cut from the history loses its record, and a
 * period that is still open (after the tenant's closed-through period) is never
 * scored. Rescoring the same history again changes nothing.
 */

/**
 * KEYS: periods. ARGV: quadruples (period, runId, forecast, actual); '' for a
 * missing forecast or actual. Periods not listed lose their record.
 * Returns {added, corrected, removed}.
 */
const RESCORE = `
local seen = {}
local added, corrected, removed = 0, 0, 0
for i = 1, #ARGV, 4 do
  local p, run, f, a = ARGV[i], ARGV[i + 1], ARGV[i + 2], ARGV[i + 3]
  seen[p] = true
  local cur = redis.call('HGET', KEYS[1], p)
  if a == '' then
    if cur then
      redis.call('HDEL', KEYS[1], p)
      removed = removed + 1
    end
  elseif not cur then
    if f ~= '' then
      redis.call('HSET', KEYS[1], p, run .. '|' .. f .. '|' .. a)
      added = added + 1
    end
  else
    local x = string.find(cur, '|', 1, true)
    local y = x and string.find(cur, '|', x + 1, true)
    if y and string.sub(cur, y + 1) ~= a then
      redis.call('HSET', KEYS[1], p, string.sub(cur, 1, y) .. a)
      corrected = corrected + 1
    end
  end
end
for _, p in ipairs(redis.call('HKEYS', KEYS[1])) do
  if not seen[p] then
    redis.call('HDEL', KEYS[1], p)
    removed = removed + 1
  end
end
return {added, corrected, removed}
`
const COMMAND = 'almanacRescoreActuals'

export interface ScoredRecord {
  readonly period: string
  readonly runId: string
  readonly forecastDemand: number
  readonly actualDemand: number
  /** actualDemand − forecastDemand */
  readonly deviation: number
}

export { REVIEW_STATES, type Review, type ReviewState } from '../../runs/review.js'

const ReviewRecord = z.object({
  state: z.enum(REVIEW_STATES),
  note: z.string(),
  at: z.string(),
  /** The SKU's newest published run when it was snoozed: the snooze ends when a newer one is published. */
  runId: z.string().nullable(),
})

export type SkuAccuracy = AccuracySummary & { readonly sku: string; readonly updatedAt: string }
export type ExceptionItem = SkuAccuracy & { readonly review: Review | null }

const SkuAccuracyRecord = z.object({
  sku: z.string(),
  scoredPeriods: z.number().int().min(0),
  mae: z.number().nullable(),
  bias: z.number().nullable(),
  mape: z.number().nullable(),
  trackingSignal: z.number().nullable(),
  smoothedTrackingSignal: z.number().nullable(),
  flagged: z.boolean(),
  flaggedBy: z.array(z.enum(['tracking-signal', 'smoothed-tracking-signal'])),
  trackingLimit: z.number(),
  smoothedTrackingLimit: z.number(),
  updatedAt: z.string(),
})

/** A SKU's stored history as scoring reads it. */
export interface HistoryEntry {
  readonly sku: string
  readonly frequency: Frequency
  readonly firstPeriod: string
  readonly demand: readonly (number | null)[]
}

export interface RescoreOutcome {
  readonly added: number
  readonly corrected: number
  readonly removed: number
}

export interface AccuracyStoreOptions {
  readonly prefix: string
  readonly tracking?: TrackingOptions
  readonly now?: () => Date
}

export class AccuracyStore {
  constructor(
    private readonly redis: RedisClient,
    private readonly runs: Pick<RunStore, 'publishedPoints'>,
    private readonly closing: Pick<ClosingStore, 'ordinals'>,
    private readonly opts: AccuracyStoreOptions,
  ) {
    if (!(COMMAND in redis)) redis.defineCommand(COMMAND, { numberOfKeys: 1, lua: RESCORE })
  }

  private base(tenant: string): string {
    return accuracyBase(this.opts.prefix, tenant)
  }

  private periodsKey(tenant: string, sku: string): string {
    return `${this.base(tenant)}:p:${Buffer.from(sku, 'utf8').toString('base64url')}`
  }

  /** Delete a SKU's accuracy records, summary and exception entry (its history was deleted). */
  async forget(tenant: string, sku: string): Promise<void> {
    // One command per key: the keys have no common hash tag, so a cluster may hold them on different slots.
    await Promise.all([
      this.redis.del(this.periodsKey(tenant, sku)),
      this.redis.hdel(`${this.base(tenant)}:summary`, sku),
      this.redis.zrem(`${this.base(tenant)}:exceptions`, sku),
    ])
  }

  /**
   * Rescores the SKUs whose histories were written (an upload, a closing): one
   * round trip finds the SKUs that have published forecasts; only those cost more.
   */
  async rescoreMany(tenant: string, entries: readonly HistoryEntry[], parallel = 16): Promise<RescoreOutcome & { readonly scored: number }> {
    if (entries.length === 0) return { scored: 0, added: 0, corrected: 0, removed: 0 }
    const [published, closed, from] = await Promise.all([
      this.runs.publishedPoints(tenant, entries.map((e) => e.sku)),
      this.closing.ordinals(tenant),
      this.redis.hmget(`${this.base(tenant)}:from`, ...entries.map((e) => e.sku)),
    ])
    const todo = entries.flatMap((e, i) => (published[i]!.length > 0 ? [{ e, p: published[i]!, from: from[i] ?? null }] : []))
    let added = 0
    let corrected = 0
    let removed = 0
    for (let i = 0; i < todo.length; i += parallel) {
      const outs = await Promise.all(todo.slice(i, i + parallel).map(({ e, p, from: f }) => this.score(tenant, e, p, closed, f)))
      for (const o of outs) {
        added += o.added
        corrected += o.corrected
        removed += o.removed
      }
    }
    return { scored: todo.length, added, corrected, removed }
  }

  /**
   * Rescores one SKU. `fresh`: drop its records first, so every period is scored
   * against the newest kept published forecast that covered it.
   */
  async rescore(tenant: string, entry: HistoryEntry, options: { readonly fresh?: boolean } = {}): Promise<RescoreOutcome & { summary: SkuAccuracy | null }> {
    if (options.fresh) await this.redis.unlink(this.periodsKey(tenant, entry.sku))
    const [[published], closed, from] = await Promise.all([
      this.runs.publishedPoints(tenant, [entry.sku]),
      this.closing.ordinals(tenant),
      this.redis.hget(`${this.base(tenant)}:from`, entry.sku),
    ])
    const out = await this.score(tenant, entry, published ?? [], closed, from)
    if (options.fresh && out.added + out.corrected + out.removed === 0) return { ...out, summary: await this.refresh(tenant, entry.sku) }
    return { ...out, summary: await this.get(tenant, entry.sku) }
  }

  /**
   * Starts a SKU's accuracy afresh: deletes its records, summary, exception and
   * review, and scores only periods after `through` from now on (null: every
   * period again, at the next rescore).
   */
  async reset(tenant: string, sku: string, through: string | null): Promise<void> {
    const base = this.base(tenant)
    await this.redis.unlink(this.periodsKey(tenant, sku))
    if (through === null) await this.redis.hdel(`${base}:from`, sku)
    else await this.redis.hset(`${base}:from`, sku, through)
    await this.redis.hdel(`${base}:summary`, sku)
    await this.redis.zrem(`${base}:exceptions`, sku)
    await this.redis.hdel(`${base}:review`, sku)
  }

  /** The periods of a history that may be scored: closed, after the SKU's reset point. */
  private scorable(entry: HistoryEntry, closed: ClosedOrdinals, from: string | null): { first: number; last: number } {
    const first = parsePeriod(entry.firstPeriod, entry.frequency)
    let last = first + entry.demand.length - 1
    const through = closed[entry.frequency]
    if (through !== undefined) last = Math.min(last, through)
    let start = first
    if (from !== null) {
      const fromOrdinal = safeOrdinal(from, entry.frequency)
      if (fromOrdinal !== null) start = Math.max(start, fromOrdinal + 1)
    }
    return { first: start, last }
  }

  private async score(
    tenant: string,
    entry: HistoryEntry,
    published: readonly PublishedPoints[],
    closed: ClosedOrdinals,
    from: string | null,
  ): Promise<RescoreOutcome> {
    const forecasts = issued(published, entry.frequency)
    const origin = parsePeriod(entry.firstPeriod, entry.frequency)
    const { first, last } = this.scorable(entry, closed, from)
    const args: string[] = []
    for (let o = first; o <= last; o++) {
      const value = entry.demand[o - origin]
      const label = formatPeriod(o, entry.frequency)
      if (value === null || value === undefined || !Number.isFinite(value)) {
        args.push(label, '', '', '')
        continue
      }
      const f = forecasts.find((x) => x.points.has(o))
      args.push(label, f?.runId ?? '', f === undefined ? '' : String(f.points.get(o)), String(value))
    }
    const run = (this.redis as unknown as Record<string, (...a: string[]) => Promise<unknown[]>>)[COMMAND]!
    const reply = await run.call(this.redis, this.periodsKey(tenant, entry.sku), ...args)
    const out = {
      added: countOf(reply[0], 'periods added'),
      corrected: countOf(reply[1], 'periods corrected'),
      removed: countOf(reply[2], 'periods removed'),
    }
    if (out.added + out.corrected + out.removed > 0) await this.refresh(tenant, entry.sku)
    return out
  }

  /**
   * Accuracy at a fixed lag, computed from the history and the SKU's kept
   * published forecasts (so at most as many periods as forecasts are kept).
   */
  async atLag(tenant: string, entry: HistoryEntry, lag: number): Promise<{ summary: AccuracySummary; periods: ScoredRecord[] }> {
    const [[published], closed, from] = await Promise.all([
      this.runs.publishedPoints(tenant, [entry.sku]),
      this.closing.ordinals(tenant),
      this.redis.hget(`${this.base(tenant)}:from`, entry.sku),
    ])
    const origin = parsePeriod(entry.firstPeriod, entry.frequency)
    const { first, last } = this.scorable(entry, closed, from)
    const actual = (o: number) => {
      const v = o >= first && o <= last ? entry.demand[o - origin] : null
      return typeof v === 'number' && Number.isFinite(v) ? v : null
    }
    const periods = pairsAtLag(issued(published ?? [], entry.frequency), actual, lag).map((p) => ({
      period: formatPeriod(p.ordinal, entry.frequency),
      runId: p.runId,
      forecastDemand: p.forecastDemand,
      actualDemand: p.actualDemand,
      deviation: p.actualDemand - p.forecastDemand,
    }))
    return { summary: summariseAccuracy(periods, this.opts.tracking), periods }
  }

  /** Every scored period of a SKU, oldest period first. */
  async periods(tenant: string, sku: string, frequency?: Frequency): Promise<ScoredRecord[]> {
    if (!isValidTenant(tenant)) return []
    return decodeRecords(await this.redis.hgetall(this.periodsKey(tenant, sku)), frequency)
  }

  async get(tenant: string, sku: string): Promise<SkuAccuracy | null> {
    if (!isValidTenant(tenant)) return null
    const json = await this.redis.hget(`${this.base(tenant)}:summary`, sku)
    return json === null ? null : decodeJson(SkuAccuracyRecord, json, `accuracy summary of SKU ${sku}`)
  }

  /** Summaries of many SKUs in the order asked (null where none). */
  async getMany(tenant: string, skus: readonly string[]): Promise<(SkuAccuracy | null)[]> {
    if (skus.length === 0 || !isValidTenant(tenant)) return skus.map(() => null)
    const jsons = await this.redis.hmget(`${this.base(tenant)}:summary`, ...skus)
    return jsons.map((j, i) => (j === null ? null : decodeJson(SkuAccuracyRecord, j, `accuracy summary of SKU ${skus[i]}`)))
  }

  /**
   * Flagged SKUs by SKU (byte order), each with its review state. A SKU snoozed
   * since the last published forecast is left out unless `includeSnoozed`, so a
   * page may hold fewer than `limit` items.
   * @throws CursorError on a cursor this service did not issue.
   */
  async exceptions(
    tenant: string,
    limit: number,
    cursor?: string,
    includeSnoozed = false,
  ): Promise<{ items: ExceptionItem[]; nextCursor: string | null }> {
    if (!isValidTenant(tenant)) return { items: [], nextCursor: null }
    const from = cursor === undefined ? '-' : `(${decodeCursor(cursor)}`
    const n = Math.max(1, Math.floor(limit))
    const base = this.base(tenant)
    const skus = await this.redis.zrangebylex(`${base}:exceptions`, from, '+', 'LIMIT', 0, n + 1)
    const page = skus.slice(0, n)
    const last = page[page.length - 1]
    const nextCursor = skus.length > n && last !== undefined ? encodeCursor(last) : null
    if (page.length === 0) return { items: [], nextCursor }
    const [jsons, reviews, published] = await Promise.all([
      this.redis.hmget(`${base}:summary`, ...page),
      this.redis.hmget(`${base}:review`, ...page),
      this.runs.publishedPoints(tenant, page),
    ])
    const items: ExceptionItem[] = []
    page.forEach((sku, i) => {
      const json = jsons[i]
      if (json == null) return
      const review = reviews[i] == null ? null : decodeJson(ReviewRecord, reviews[i]!, `review of SKU ${sku}`)
      const snoozed = review?.state === 'snoozed' && review.runId === (published[i]![0]?.runId ?? null)
      if (snoozed && !includeSnoozed) return
      items.push({ ...decodeJson(SkuAccuracyRecord, json, 'accuracy summary'), review })
    })
    return { items, nextCursor }
  }

  /** Up to `n` flagged SKUs after `after` (byte order; null: from the start), for the worklist. */
  async flaggedAfter(tenant: string, after: string | null, n: number): Promise<string[]> {
    if (!isValidTenant(tenant)) return []
    return this.redis.zrangebylex(`${this.base(tenant)}:exceptions`, after === null ? '-' : `(${after}`, '+', 'LIMIT', 0, n)
  }

  /** How many SKUs are flagged (snoozed ones included). */
  async flaggedCount(tenant: string): Promise<number> {
    if (!isValidTenant(tenant)) return 0
    return this.redis.zcard(`${this.base(tenant)}:exceptions`)
  }

  /**
   * Acknowledges or snoozes a flagged SKU. A snooze lasts until a newer
   * forecast of the SKU is published; an acknowledgement until the SKU leaves
   * the list. Null when the SKU is not on the exception list.
   */
  async review(tenant: string, sku: string, state: ReviewState, note: string): Promise<ExceptionItem | null> {
    if (!isValidTenant(tenant)) return null
    const base = this.base(tenant)
    if ((await this.redis.zscore(`${base}:exceptions`, sku)) === null) return null
    const [published] = await this.runs.publishedPoints(tenant, [sku])
    const review: Review = { state, note, at: (this.opts.now?.() ?? new Date()).toISOString(), runId: published?.[0]?.runId ?? null }
    await this.redis.hset(`${base}:review`, sku, JSON.stringify(review))
    const summary = await this.get(tenant, sku)
    return summary === null ? null : { ...summary, review }
  }

  /** Recomputes the SKU's summary from its scored periods (the engine's summariseAccuracy). */
  private async refresh(tenant: string, sku: string): Promise<SkuAccuracy | null> {
    const base = this.base(tenant)
    const records = await this.periods(tenant, sku)
    if (records.length === 0) {
      await this.redis.hdel(`${base}:summary`, sku)
      await this.redis.zrem(`${base}:exceptions`, sku)
      await this.redis.hdel(`${base}:review`, sku)
      return null
    }
    const s = summariseAccuracy(records, this.opts.tracking)
    const summary: SkuAccuracy = { sku, ...s, updatedAt: (this.opts.now?.() ?? new Date()).toISOString() }
    // The summary hash and the exception list lie in different slots of a Redis Cluster, so they
    // are written one after the other, not in one MULTI. The summary goes first: a process dying
    // in between leaves the list one refresh behind, and the SKU's next refresh sets it right.
    await this.redis.hset(`${base}:summary`, sku, JSON.stringify(summary))
    if (s.flagged) await this.redis.zadd(`${base}:exceptions`, 0, sku)
    else {
      await this.redis.zrem(`${base}:exceptions`, sku)
      await this.redis.hdel(`${base}:review`, sku)
    }
    return summary
  }
}

/** A SKU's kept published forecasts as period ordinals of the history's frequency, newest first. */
function issued(published: readonly PublishedPoints[], frequency: Frequency): IssuedForecast[] {
  return published.map((p) => {
    const points = new Map<number, number>()
    for (const [label, value] of p.points) {
      const o = safeOrdinal(label, frequency)
      if (o !== null) points.set(o, value)
    }
    return { runId: p.runId, points }
  })
}

function decodeRecords(h: Record<string, string>, frequency?: Frequency): ScoredRecord[] {
  const out = Object.entries(h).map(([period, v]) => {
    const [runId, f, a] = v.split('|')
    const forecastDemand = finiteOf(f, `forecast of scored period ${period}`)
    const actualDemand = finiteOf(a, `actual of scored period ${period}`)
    return { period, runId: runId ?? '', forecastDemand, actualDemand, deviation: actualDemand - forecastDemand }
  })
  // Labels of one frequency sort as their periods do, except ISO weeks against days, which never mix in one SKU.
  const order = (p: string) => (frequency ? (safeOrdinal(p, frequency) ?? Number.MAX_SAFE_INTEGER) : 0)
  return out.sort((x, y) => order(x.period) - order(y.period) || x.period.localeCompare(y.period))
}

function safeOrdinal(label: string, frequency: Frequency): number | null {
  try {
    return parsePeriod(label, frequency)
  } catch {
    return null
  }
}
