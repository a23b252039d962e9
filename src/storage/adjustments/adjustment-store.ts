import { z } from 'zod'
import type { RedisClient } from '../redis.js'
import { countOf, decodeJson } from '../decode.js'
import { decodeCursor, encodeCursor, CursorError } from '../paging.js'
import { isValidTenant } from '../keys.js'
import type { Adjustment, AdjustmentChange } from '../../runs/adjustments.js'

/**
 * Adjustments of SKU forecasts, stored apart from the statistical forecasts,
 * and their audit trail.
 *
 *   adj:{T}:set:<b64url(sku)>    hash  period -> JSON adjustment in force (change, reason, author, setAt, runId)
 *   adj:{T}:trail:<b64url(sku)>  list  JSON trail entries, oldest first (appended, never rewritten)
 *   adj:{T}:skus                 zset  SKUs with at least one adjustment in force, score 0
 *
 * under `${prefix}:t:${tenant}:`, no TTL. The tenant sits in a hash tag so one
 * write (a Lua script over a SKU's set, its trail and the index) stays on one
 * slot of a cluster. A write checks the values it read (optimistic
 * concurrency): two planners adjusting the same period at once never record a
 * trail entry whose "before" is not what it replaced.
 */

const ChangeRecord = z.union([
  z.strictObject({ setDemand: z.number().finite() }),
  z.strictObject({ changePercent: z.number().finite() }),
])

const AdjustmentRecord = z.object({
  change: ChangeRecord,
  reason: z.string(),
  author: z.string(),
  setAt: z.string(),
  runId: z.string(),
})

const TrailChange = z.union([z.object({ setDemand: z.number() }), z.object({ changePercent: z.number() })]).nullable()

const TrailRecord = z.object({
  at: z.string(),
  action: z.enum(['set', 'removed', 'expired']),
  period: z.string(),
  author: z.string(),
  reason: z.string(),
  before: TrailChange,
  after: TrailChange,
  statisticalDemand: z.number().nullable(),
  finalDemandBefore: z.number().nullable(),
  finalDemandAfter: z.number().nullable(),
  runId: z.string().nullable(),
})

export interface TrailEntry {
  readonly at: string
  readonly action: 'set' | 'removed' | 'expired'
  readonly period: string
  readonly author: string
  readonly reason: string
  readonly before: AdjustmentChange | null
  readonly after: AdjustmentChange | null
  readonly statisticalDemand: number | null
  readonly finalDemandBefore: number | null
  readonly finalDemandAfter: number | null
  readonly runId: string | null
}

/** An adjustment as read, with the stored text a write must find unchanged. */
export interface StoredAdjustment {
  readonly adjustment: Adjustment
  readonly stored: string
}

/** One period's change in a write: what was read (null: none), what it becomes (null: removed), the trail entry. */
export interface AdjustmentWrite {
  readonly period: string
  readonly expected: string | null
  readonly next: Adjustment | null
  readonly entry: TrailEntry
}

/**
 * KEYS: set, trail, skus. ARGV: sku, then quadruples (period, expected, next, entry);
 * '' for no adjustment. Returns -1 (nothing written) when any expected value changed,
 * else how many periods were written.
 */
const APPLY = `
for i = 2, #ARGV, 4 do
  if (redis.call('HGET', KEYS[1], ARGV[i]) or '') ~= ARGV[i + 1] then return -1 end
end
local n = 0
for i = 2, #ARGV, 4 do
  if ARGV[i + 2] == '' then redis.call('HDEL', KEYS[1], ARGV[i]) else redis.call('HSET', KEYS[1], ARGV[i], ARGV[i + 2]) end
  redis.call('RPUSH', KEYS[2], ARGV[i + 3])
  n = n + 1
end
if redis.call('HLEN', KEYS[1]) == 0 then redis.call('ZREM', KEYS[3], ARGV[1]) else redis.call('ZADD', KEYS[3], 0, ARGV[1]) end
return n
`
const COMMAND = 'almanacApplyAdjustments'
/** SKUs looked up in the index per command. */
const INDEX_PART = 1000

export class AdjustmentStore {
  constructor(
    private readonly redis: RedisClient,
    private readonly opts: { readonly prefix: string },
  ) {
    if (!(COMMAND in redis)) redis.defineCommand(COMMAND, { numberOfKeys: 3, lua: APPLY })
  }

  private keys(tenant: string, sku: string) {
    if (!isValidTenant(tenant)) throw new Error(`invalid tenant for a Redis key: ${JSON.stringify(tenant)}`)
    const base = `${this.opts.prefix}:t:${tenant}:adj:{${tenant}}`
    const s = Buffer.from(sku, 'utf8').toString('base64url')
    return { set: `${base}:set:${s}`, trail: `${base}:trail:${s}`, skus: `${base}:skus` }
  }

  /**
   * Forgets the adjustments in force for a SKU (its history was deleted), so a SKU created
   * again under the same code starts without them. The audit trail stays: it is the record
   * of what planners did.
   */
  async forget(tenant: string, sku: string): Promise<void> {
    if (!isValidTenant(tenant)) return
    const k = this.keys(tenant, sku)
    await this.redis.multi().del(k.set).zrem(k.skus, sku).exec()
  }

  /** The adjustments in force for a SKU, by period. */
  async inForce(tenant: string, sku: string): Promise<Map<string, StoredAdjustment>> {
    if (!isValidTenant(tenant)) return new Map()
    return this.decodeSet(sku, await this.redis.hgetall(this.keys(tenant, sku).set))
  }

  /** inForce of many SKUs, in the order asked: one round trip finds the SKUs that have any. */
  async inForceMany(tenant: string, skus: readonly string[]): Promise<Map<string, StoredAdjustment>[]> {
    if (!isValidTenant(tenant) || skus.length === 0) return skus.map(() => new Map())
    // In parts, so a bulk upload's batch never becomes one command with tens of thousands of arguments.
    const scores: (string | null)[] = []
    for (let i = 0; i < skus.length; i += INDEX_PART) {
      scores.push(...(await this.redis.zmscore(this.keys(tenant, '').skus, ...skus.slice(i, i + INDEX_PART))))
    }
    const out = skus.map(() => new Map<string, StoredAdjustment>())
    const todo = skus.flatMap((sku, i) => (scores[i] === null ? [] : [{ sku, i }]))
    const sets = await Promise.all(todo.map(({ sku }) => this.redis.hgetall(this.keys(tenant, sku).set)))
    todo.forEach(({ sku, i }, k) => {
      out[i] = this.decodeSet(sku, sets[k] ?? {})
    })
    return out
  }

  private decodeSet(sku: string, h: Record<string, string>): Map<string, StoredAdjustment> {
    const out = new Map<string, StoredAdjustment>()
    for (const [period, stored] of Object.entries(h)) {
      const r = decodeJson(AdjustmentRecord, stored, `adjustment of SKU ${sku} for ${period}`)
      out.set(period, { stored, adjustment: { period, ...r } })
    }
    return out
  }

  /**
   * Writes the changes of one SKU and appends their trail entries, all or nothing.
   * @returns false when an adjustment changed since it was read (read again and retry).
   */
  async apply(tenant: string, sku: string, writes: readonly AdjustmentWrite[]): Promise<boolean> {
    if (writes.length === 0) return true
    const k = this.keys(tenant, sku)
    const args = [sku]
    for (const w of writes) args.push(w.period, w.expected ?? '', w.next === null ? '' : encodeAdjustment(w.next), JSON.stringify(w.entry))
    const run = (this.redis as unknown as Record<string, (...a: string[]) => Promise<unknown>>)[COMMAND]!
    const reply = await run.call(this.redis, k.set, k.trail, k.skus, ...args)
    if (reply === -1) return false
    countOf(reply, 'adjustments written')
    return true
  }

  /**
   * A page of a SKU's trail, newest first. The cursor is the position of the
   * next older entry; entries are only ever appended, so pages stay stable
   * while new entries arrive.
   * @throws CursorError on a cursor this service did not issue.
   */
  async trail(tenant: string, sku: string, limit: number, cursor?: string): Promise<{ items: TrailEntry[]; nextCursor: string | null }> {
    if (!isValidTenant(tenant)) return { items: [], nextCursor: null }
    const key = this.keys(tenant, sku).trail
    let from: number
    if (cursor === undefined) from = (await this.redis.llen(key)) - 1
    else {
      const text = decodeCursor(cursor)
      if (!/^(0|[1-9][0-9]{0,14})$/.test(text)) throw new CursorError()
      from = Number(text)
    }
    if (from < 0) return { items: [], nextCursor: null }
    const n = Math.max(1, Math.floor(limit))
    const to = Math.max(0, from - n + 1)
    const raw = await this.redis.lrange(key, to, from)
    const items = raw.reverse().map((j) => decodeJson(TrailRecord, j, `adjustment trail entry of SKU ${sku}`))
    return { items, nextCursor: to > 0 ? encodeCursor(String(to - 1)) : null }
  }
}

/** The stored text of an adjustment (the period is the hash field). */
export function encodeAdjustment(a: Adjustment): string {
  return JSON.stringify({ change: a.change, reason: a.reason, author: a.author, setAt: a.setAt, runId: a.runId })
}
