import type { RedisClient } from '../redis.js'
import { historyKeys } from './history-store.js'

/**
 * What idle-history retention reads besides the histories: the last-write index
 * (`written`, kept by history-store.ts's write and delete scripts), its one-off
 * backfill, and the SKUs whose history retention deleted but whose records are
 * not forgotten yet (`removed`). Key layout: history-store.ts.
 */

/**
 * KEYS: skus, written, backfill cursor. ARGV: now in ms, page size.
 * Gives the next page of the SKU index a last-write time of `now` where it has
 * none (ZADD NX: a time a write set is kept) and moves the cursor. The cursor
 * holds 'after:' and the page's last SKU, or 'done'. Returns 1 while SKUs
 * remain, 0 once every SKU has been seen.
 */
const BACKFILL = `
local from = redis.call('GET', KEYS[3])
if from == 'done' then return 0 end
local min = '-'
if from then min = '(' .. string.sub(from, 7) end
local size = tonumber(ARGV[2])
local skus = redis.call('ZRANGEBYLEX', KEYS[1], min, '+', 'LIMIT', 0, size)
for _, sku in ipairs(skus) do redis.call('ZADD', KEYS[2], 'NX', tonumber(ARGV[1]), sku) end
if #skus < size then
  redis.call('SET', KEYS[3], 'done')
  return 0
end
redis.call('SET', KEYS[3], 'after:' .. skus[#skus])
return 1
`
const BACKFILL_COMMAND = 'almanacBackfillLastWrites'

export class IdleHistoryIndex {
  constructor(
    private readonly redis: RedisClient,
    private readonly opts: { readonly prefix: string },
  ) {
    if (!(BACKFILL_COMMAND in redis)) redis.defineCommand(BACKFILL_COMMAND, { numberOfKeys: 3, lua: BACKFILL })
  }

  /**
   * Histories stored before the last-write index existed have no entry: the next
   * `limit` SKUs of the index get `nowMs`, so they count as written when first
   * seen and are never removed for lack of data.
   * @returns true while SKUs remain to be seen
   */
  async backfill(tenant: string, nowMs: number, limit: number): Promise<boolean> {
    const k = historyKeys(this.opts.prefix, tenant)
    const run = (this.redis as unknown as Record<string, (...a: unknown[]) => Promise<unknown>>)[BACKFILL_COMMAND]!
    return (await run.call(this.redis, k.skus, k.written, k.writtenBackfill, Math.floor(nowMs), Math.max(1, Math.floor(limit)))) === 1
  }

  /** Up to `limit` SKUs last written at or before `cutoffMs`, longest idle first. */
  async idle(tenant: string, cutoffMs: number, limit: number): Promise<string[]> {
    const k = historyKeys(this.opts.prefix, tenant)
    return this.redis.zrangebyscore(k.written, '-inf', Math.floor(cutoffMs), 'LIMIT', 0, Math.max(1, Math.floor(limit)))
  }

  /** When each SKU's history was last written (ms), null where the index has no entry. */
  async lastWrites(tenant: string, skus: readonly string[]): Promise<(number | null)[]> {
    if (skus.length === 0) return []
    const scores = await this.redis.zmscore(historyKeys(this.opts.prefix, tenant).written, ...skus)
    return scores.map((s) => (s === null ? null : Number(s)))
  }

  /** Up to `limit` SKUs retention deleted whose records are still to be forgotten. */
  async removed(tenant: string, limit: number): Promise<string[]> {
    return this.redis.srandmember(historyKeys(this.opts.prefix, tenant).removed, Math.max(1, Math.floor(limit)))
  }

  /** The records of these removed SKUs are forgotten: they leave the removed set. */
  async forgotten(tenant: string, skus: readonly string[]): Promise<void> {
    if (skus.length > 0) await this.redis.srem(historyKeys(this.opts.prefix, tenant).removed, ...skus)
  }
}
