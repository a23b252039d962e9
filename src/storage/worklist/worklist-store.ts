import { z } from 'zod'
import type { RedisClient } from '../redis.js'
import { countOf, decodeJson, FailureRecord } from '../decode.js'
import { isValidTenant } from '../keys.js'
import { REVIEW_STATES, type Review } from '../../runs/review.js'
import { RUN_KINDS, type RunKind, type WorklistEntry } from '../../runs/worklist.js'

/**
 * The run-decided part of the planners' worklist (runs/worklist.ts), per tenant:
 *
 *   wl:{T}:entry          hash  sku -> `${createdAtMs}|${runId}|${JSON entry}`: the newest
 *                               publishing run's decision for the SKU (also when no kind holds)
 *   wl:{T}:k:<kind>       zset  SKUs on the list for that kind, score 0 (ordered by ZRANGEBYLEX)
 *   wl:{T}:any            zset  SKUs with at least one run-decided kind
 *   wl:{T}:review         hash  sku -> JSON review (acknowledged / snoozed) with the run it was made on
 *
 * under `${prefix}:t:${tenant}:`, no TTL. The tenant sits in a hash tag so the
 * script below may touch every key on a Redis Cluster. A newer run's decision
 * replaces an older one's; an older run's (a late chunk retry) never replaces a
 * newer one's, and recording the same run again changes nothing.
 */

/**
 * KEYS: entry, any, review, k:large-change, k:failed, k:short-history.
 * ARGV: createdAtMs, runId, then triples (sku, kinds as a comma list, JSON).
 * Returns how many SKUs' entries changed.
 */
const RECORD = `
local created = tonumber(ARGV[1])
local runId = ARGV[2]
local kinds = {'large-change', 'failed', 'short-history'}
local changed = 0
for i = 3, #ARGV, 3 do
  local sku, list, json = ARGV[i], ARGV[i + 1], ARGV[i + 2]
  local cur = redis.call('HGET', KEYS[1], sku)
  local newer = false
  local same = false
  if cur then
    local a = string.find(cur, '|', 1, true)
    local b = a and string.find(cur, '|', a + 1, true)
    local c = b and tonumber(string.sub(cur, 1, a - 1))
    local r = b and string.sub(cur, a + 1, b - 1)
    if c and (c > created or (c == created and r > runId)) then newer = true end
    if r == runId then same = true end
  end
  if not newer then
    local value = ARGV[1] .. '|' .. runId .. '|' .. json
    if cur ~= value then
      redis.call('HSET', KEYS[1], sku, value)
      changed = changed + 1
    end
    local set = {}
    for k in string.gmatch(list, '[^,]+') do set[k] = true end
    for j, k in ipairs(kinds) do
      if set[k] then redis.call('ZADD', KEYS[3 + j], 0, sku) else redis.call('ZREM', KEYS[3 + j], sku) end
    end
    if list ~= '' then redis.call('ZADD', KEYS[2], 0, sku) else redis.call('ZREM', KEYS[2], sku) end
    if cur and not same then redis.call('HDEL', KEYS[3], sku) end
  end
end
return changed
`
const COMMAND = 'almanacRecordWorklist'

const EntryRecord = z.object({
  kinds: z.array(z.enum(RUN_KINDS)),
  changeRatio: z.number().nullable(),
  previousRunId: z.string().nullable(),
  commonPeriods: z.number().int().min(0),
  failure: FailureRecord.nullable(),
  historyLength: z.number().int().min(0).nullable(),
})

export const WorklistReviewRecord = z.object({
  state: z.enum(REVIEW_STATES),
  note: z.string(),
  at: z.string(),
  /** The run of the SKU's newest entry or published forecast when reviewed: the review ends with a newer one. */
  runId: z.string().nullable(),
})

/** A SKU's stored entry with the run that decided it. */
export interface StoredWorklistEntry extends WorklistEntry {
  readonly runId: string
  readonly createdAtMs: number
}

/** Entries recorded per script call, so one call never grows to tens of thousands of arguments. */
const RECORD_PART = 500

export class WorklistStore {
  constructor(
    private readonly redis: RedisClient,
    private readonly opts: { readonly prefix: string },
  ) {
    if (!(COMMAND in redis)) redis.defineCommand(COMMAND, { numberOfKeys: 6, lua: RECORD })
  }

  private keys(tenant: string) {
    if (!isValidTenant(tenant)) throw new Error(`invalid tenant for a Redis key: ${JSON.stringify(tenant)}`)
    const base = `${this.opts.prefix}:t:${tenant}:wl:{${tenant}}`
    return {
      entry: `${base}:entry`,
      any: `${base}:any`,
      review: `${base}:review`,
      kind: (kind: RunKind) => `${base}:k:${kind}`,
    }
  }

  /** Records a publishing run's decisions (idempotent; an older run never replaces a newer run's entry). */
  async record(tenant: string, runId: string, createdAtMs: number, entries: readonly WorklistEntry[]): Promise<number> {
    if (entries.length === 0) return 0
    const k = this.keys(tenant)
    const keys = [k.entry, k.any, k.review, ...RUN_KINDS.map(k.kind)]
    const run = (this.redis as unknown as Record<string, (...a: (string | number)[]) => Promise<unknown>>)[COMMAND]!
    let changed = 0
    for (let i = 0; i < entries.length; i += RECORD_PART) {
      const args: (string | number)[] = [createdAtMs, runId]
      for (const e of entries.slice(i, i + RECORD_PART)) {
        const { sku, ...rest } = e
        args.push(sku, e.kinds.join(','), JSON.stringify(rest))
      }
      changed += countOf(await run.call(this.redis, ...keys, ...args), 'worklist entries changed')
    }
    return changed
  }

  /**
   * Up to `n` SKUs after `after` (byte order; null: from the start) on the list
   * of one kind, or of any run-decided kind.
   */
  async skusAfter(tenant: string, kind: RunKind | 'any', after: string | null, n: number): Promise<string[]> {
    if (!isValidTenant(tenant)) return []
    const k = this.keys(tenant)
    return this.redis.zrangebylex(kind === 'any' ? k.any : k.kind(kind), after === null ? '-' : `(${after}`, '+', 'LIMIT', 0, n)
  }

  /** The SKUs' stored entries in the order asked (null where none or unreadable). */
  async entries(tenant: string, skus: readonly string[]): Promise<(StoredWorklistEntry | null)[]> {
    if (skus.length === 0 || !isValidTenant(tenant)) return skus.map(() => null)
    const values = await this.redis.hmget(this.keys(tenant).entry, ...skus)
    return values.map((v, i) => (v === null ? null : decodeEntry(skus[i]!, v)))
  }

  async reviews(tenant: string, skus: readonly string[]): Promise<(Review | null)[]> {
    if (skus.length === 0 || !isValidTenant(tenant)) return skus.map(() => null)
    const values = await this.redis.hmget(this.keys(tenant).review, ...skus)
    return values.map((v, i) => (v === null ? null : decodeJson(WorklistReviewRecord, v, `worklist review of SKU ${skus[i]}`)))
  }

  async setReview(tenant: string, sku: string, review: Review): Promise<void> {
    await this.redis.hset(this.keys(tenant).review, sku, JSON.stringify(review))
  }

  /** SKUs on the list per run-decided kind (snoozed ones included). */
  async counts(tenant: string): Promise<Record<RunKind, number>> {
    const out = { 'large-change': 0, failed: 0, 'short-history': 0 } as Record<RunKind, number>
    if (!isValidTenant(tenant)) return out
    const k = this.keys(tenant)
    const n = await Promise.all(RUN_KINDS.map((kind) => this.redis.zcard(k.kind(kind))))
    RUN_KINDS.forEach((kind, i) => (out[kind] = n[i]!))
    return out
  }

  /** Forget a SKU's entry, kinds and review (its history was deleted). */
  async forget(tenant: string, sku: string): Promise<void> {
    if (!isValidTenant(tenant)) return
    const k = this.keys(tenant)
    const tx = this.redis.multi().hdel(k.entry, sku).hdel(k.review, sku).zrem(k.any, sku)
    for (const kind of RUN_KINDS) tx.zrem(k.kind(kind), sku)
    await tx.exec()
  }
}

function decodeEntry(sku: string, value: string): StoredWorklistEntry | null {
  const a = value.indexOf('|')
  const b = a < 0 ? -1 : value.indexOf('|', a + 1)
  if (b < 0) return null
  const createdAtMs = Number(value.slice(0, a))
  if (!Number.isFinite(createdAtMs)) return null
  const entry = decodeJson(EntryRecord, value.slice(b + 1), `worklist entry of SKU ${sku}`)
  return { sku, runId: value.slice(a + 1, b), createdAtMs, ...entry }
}
