import { z } from 'zod'
import type { RedisClient } from '../redis.js'
import { countOf, decodeJson, finiteOf } from '../decode.js'
import { parsePeriod, summariseAccuracy, type AccuracySummary, type Frequency } from '../../engine/index.js'
import { decodeCursor, encodeCursor } from '../paging.js'
import { isValidTenant } from '../keys.js'
import type { ForecastPoints } from '../items/latest-record.js'
import type { RunStore } from '../runs/run-store.js'

/**
 * Realised accuracy per SKU: each forecast period, once its actual arrives,
 * scored against the SKU's latest successful forecast at that time (the run
 * store's latest record, which keeps the point forecast without expiry).
 *
 *   acc:p:<b64url(sku)>   hash  period -> `${runId}|${forecast}|${actual}` (one record per period)
 *   acc:summary           hash  sku -> JSON AccuracySummary + updatedAt
 *   acc:exceptions        zset  SKUs whose |tracking signal| exceeds the limit, score 0 (lex order)
 *
 * under `${prefix}:t:${tenant}:`, no TTL. A period is scored once: a repeated
 * upload with the same value changes nothing; a corrected value replaces the
 * actual and keeps the forecast it was first scored against (so one period
 * never counts twice, even when a newer run forecast it as well).
 */

/**
 * KEYS: periods. ARGV: runId, then triples (period, forecast, actual).
 * Returns {added, corrected}.
 */
const RECORD = `
local added, corrected = 0, 0
for i = 2, #ARGV, 3 do
  local cur = redis.call('HGET', KEYS[1], ARGV[i])
  if not cur then
    redis.call('HSET', KEYS[1], ARGV[i], ARGV[1] .. '|' .. ARGV[i + 1] .. '|' .. ARGV[i + 2])
    added = added + 1
  else
    local a = string.find(cur, '|', 1, true)
    local b = string.find(cur, '|', a + 1, true)
    if string.sub(cur, b + 1) ~= ARGV[i + 2] then
      redis.call('HSET', KEYS[1], ARGV[i], string.sub(cur, 1, b) .. ARGV[i + 2])
      corrected = corrected + 1
    end
  end
end
return {added, corrected}
`
const COMMAND = 'almanacRecordActuals'


export interface ScoredRecord {
  readonly period: string
  readonly runId: string
  readonly forecastDemand: number
  readonly actualDemand: number
  /** actualDemand − forecastDemand */
  readonly deviation: number
}

export type SkuAccuracy = AccuracySummary & { readonly sku: string; readonly updatedAt: string }

const SkuAccuracyRecord = z.object({
  sku: z.string(),
  scoredPeriods: z.number().int().min(0),
  mae: z.number().nullable(),
  bias: z.number().nullable(),
  mape: z.number().nullable(),
  trackingSignal: z.number().nullable(),
  flagged: z.boolean(),
  trackingLimit: z.number(),
  updatedAt: z.string(),
})

export interface PeriodValue {
  readonly period: string
  readonly value: number | null
}

/** New actuals of one SKU: its periods in the given frequency. */
export interface ActualsEntry {
  readonly sku: string
  readonly frequency: Frequency
  readonly periodValues: readonly PeriodValue[]
}

export interface RecordOutcome {
  /** Periods scored for the first time, and periods whose actual was corrected. */
  readonly added: number
  readonly corrected: number
  /** Why nothing could be compared, if so. */
  readonly reason?: 'no-forecast' | 'no-overlap'
  readonly summary: SkuAccuracy | null
}

export class AccuracyStore {
  constructor(
    private readonly redis: RedisClient,
    private readonly runs: Pick<RunStore, 'latestPoints'>,
    private readonly opts: { readonly prefix: string; readonly trackingLimit?: number; readonly now?: () => Date },
  ) {
    if (!(COMMAND in redis)) redis.defineCommand(COMMAND, { numberOfKeys: 1, lua: RECORD })
  }

  private base(tenant: string): string {
    if (!isValidTenant(tenant)) throw new Error(`invalid tenant for a Redis key: ${JSON.stringify(tenant)}`)
    return `${this.opts.prefix}:t:${tenant}:acc`
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
   * New actuals of a SKU: compares them with the SKU's latest successful
   * forecast for the periods both have, records the errors (idempotent per
   * SKU and period) and refreshes the SKU's summary and the exception list.
   * Missing values (null) and periods of another frequency are ignored.
   */
  async recordActuals(
    tenant: string,
    sku: string,
    frequency: Frequency,
    periodValues: readonly PeriodValue[],
  ): Promise<RecordOutcome> {
    const out = await this.score(tenant, { sku, frequency, periodValues }, (await this.runs.latestPoints(tenant, [sku]))[0] ?? null)
    return { ...out, summary: out.summary === undefined ? await this.get(tenant, sku) : out.summary }
  }

  /**
   * recordActuals for many SKUs of one tenant (a bulk upload): one round trip
   * finds the SKUs that have a forecast; only those cost more.
   */
  async recordActualsMany(
    tenant: string,
    entries: readonly ActualsEntry[],
    parallel = 16,
  ): Promise<{ readonly scored: number; readonly added: number; readonly corrected: number }> {
    const latest = await this.runs.latestPoints(
      tenant,
      entries.map((e) => e.sku),
    )
    const todo = entries.flatMap((e, i) => (latest[i] ? [{ e, f: latest[i]! }] : []))
    let added = 0
    let corrected = 0
    for (let i = 0; i < todo.length; i += parallel) {
      const outs = await Promise.all(todo.slice(i, i + parallel).map(({ e, f }) => this.score(tenant, e, f)))
      for (const o of outs) {
        added += o.added
        corrected += o.corrected
      }
    }
    return { scored: todo.length, added, corrected }
  }

  /** Scores one SKU's actuals against a forecast; `summary` undefined when it was not read. */
  private async score(
    tenant: string,
    entry: ActualsEntry,
    latest: ForecastPoints | null,
  ): Promise<Omit<RecordOutcome, 'summary'> & { summary?: SkuAccuracy | null }> {
    if (latest === null) return { added: 0, corrected: 0, reason: 'no-forecast' }
    const forecast = new Map<string, number>()
    for (const [period, value] of latest.points) if (sameFrequency(period, entry.frequency)) forecast.set(period, value)
    const args: string[] = [latest.runId]
    for (const { period, value } of entry.periodValues) {
      const f = forecast.get(period)
      if (f === undefined || value === null || !Number.isFinite(value)) continue
      args.push(period, String(f), String(value))
    }
    if (args.length === 1) return { added: 0, corrected: 0, reason: 'no-overlap' }
    const run = (this.redis as unknown as Record<string, (...a: string[]) => Promise<unknown[]>>)[COMMAND]!
    const reply = await run.call(this.redis, this.periodsKey(tenant, entry.sku), ...args)
    const added = countOf(reply[0], 'periods added')
    const corrected = countOf(reply[1], 'periods corrected')
    return added + corrected > 0 ? { added, corrected, summary: await this.refresh(tenant, entry.sku) } : { added, corrected }
  }

  /** Every scored period of a SKU, oldest period first. */
  async periods(tenant: string, sku: string, frequency?: Frequency): Promise<ScoredRecord[]> {
    if (!isValidTenant(tenant)) return []
    const h = await this.redis.hgetall(this.periodsKey(tenant, sku))
    const out = Object.entries(h).map(([period, v]) => {
      const [runId, f, a] = v.split('|')
      const forecastDemand = finiteOf(f, `forecast of scored period ${period}`)
      const actualDemand = finiteOf(a, `actual of scored period ${period}`)
      return { period, runId: runId ?? '', forecastDemand, actualDemand, deviation: actualDemand - forecastDemand }
    })
    const order = (p: string) => (frequency ? safeOrdinal(p, frequency) : 0)
    return out.sort((x, y) => order(x.period) - order(y.period) || x.period.localeCompare(y.period))
  }

  async get(tenant: string, sku: string): Promise<SkuAccuracy | null> {
    if (!isValidTenant(tenant)) return null
    const json = await this.redis.hget(`${this.base(tenant)}:summary`, sku)
    return json === null ? null : decodeJson(SkuAccuracyRecord, json, `accuracy summary of SKU ${sku}`)
  }

  /**
   * SKUs whose tracking signal is beyond the limit, by SKU (byte order).
   * @throws CursorError on a cursor this service did not issue.
   */
  async exceptions(tenant: string, limit: number, cursor?: string): Promise<{ items: SkuAccuracy[]; nextCursor: string | null }> {
    if (!isValidTenant(tenant)) return { items: [], nextCursor: null }
    let from = '-'
    if (cursor !== undefined) {
      from = `(${decodeCursor(cursor)}`
    }
    const n = Math.max(1, Math.floor(limit))
    const skus = await this.redis.zrangebylex(`${this.base(tenant)}:exceptions`, from, '+', 'LIMIT', 0, n + 1)
    const page = skus.slice(0, n)
    const jsons = page.length > 0 ? await this.redis.hmget(`${this.base(tenant)}:summary`, ...page) : []
    const items = jsons.filter((j): j is string => j !== null).map((j) => decodeJson(SkuAccuracyRecord, j, 'accuracy summary'))
    const last = page[page.length - 1]
    return { items, nextCursor: skus.length > n && last !== undefined ? encodeCursor(last) : null }
  }

  /** Recomputes the SKU's summary from its scored periods (the engine's summariseAccuracy). */
  private async refresh(tenant: string, sku: string): Promise<SkuAccuracy> {
    const records = await this.periods(tenant, sku)
    const s = summariseAccuracy(records, this.opts.trackingLimit === undefined ? {} : { trackingLimit: this.opts.trackingLimit })
    const summary: SkuAccuracy = { sku, ...s, updatedAt: (this.opts.now?.() ?? new Date()).toISOString() }
    const base = this.base(tenant)
    // The summary hash and the exception list lie in different slots of a Redis Cluster, so they
    // are written one after the other, not in one MULTI. The summary goes first: a process dying
    // in between leaves the list one refresh behind, and the SKU's next refresh sets it right.
    await this.redis.hset(`${base}:summary`, sku, JSON.stringify(summary))
    if (s.flagged) await this.redis.zadd(`${base}:exceptions`, 0, sku)
    else await this.redis.zrem(`${base}:exceptions`, sku)
    return summary
  }
}

function safeOrdinal(label: string, frequency: Frequency): number {
  try {
    return parsePeriod(label, frequency)
  } catch {
    return Number.MAX_SAFE_INTEGER
  }
}

function sameFrequency(label: string, frequency: Frequency): boolean {
  return safeOrdinal(label, frequency) !== Number.MAX_SAFE_INTEGER
}
