import type { RedisClient } from '../redis.js'
import { isValidTenant } from '../keys.js'
import { decodeSummaryRecord, type SummaryRecord } from './summary-record.js'

/**
 * Each SKU's summary of its newest published outcome (runs/sku-summary.ts), with
 * index sets the SKU list filters by (GET /v1/skus). Per tenant, no TTL:
 *
 *   sum:{T}:all            hash  sku -> summary record (summary-record.ts)
 *   sum:{T}:m:<model>      zset  SKUs whose newest published item chose the model, score 0
 *   sum:{T}:w:<code>       zset  SKUs whose newest published item carries the warning code, score 0
 *   sum:{T}:failed         zset  SKUs whose newest published item failed, score 0
 *   sum:{T}:e:<measure>    zset  SKUs with a holdout error on the measure their run ranked by, score = the error
 *
 * under `${prefix}:t:${tenant}:`. The tenant sits in a hash tag, so the script
 * that writes a chunk's summaries and moves its SKUs between the sets stays on
 * one slot of a cluster (every set it touches is declared in KEYS).
 */

/**
 * KEYS: the summary hash, then every index set the call may touch (declared for a
 * cluster; the script builds the same names from ARGV[1]).
 * ARGV: index key base, createdAtMs, runId, then triples (sku, the value read
 * before the call or '' for none, record tail).
 * Sets each SKU's record to `createdAtMs|runId|tail` unless a run created later
 * already holds it (ties go to the larger run id; a malformed record is
 * replaced), moving the SKU out of the old record's sets into the new one's.
 * Writing the same record again changes nothing (a retried chunk). Returns the
 * SKUs whose record changed since it was read: the caller reads them again.
 */
const PUBLISH = `
local base = ARGV[1]
local created = tonumber(ARGV[2])
local runId = ARGV[3]
local function fields(v)
  local out = {}
  for f in string.gmatch(v .. '|', '([^|]*)|') do out[#out + 1] = f end
  return out
end
local function unindex(sku, f)
  if (f[3] or '') ~= '' then redis.call('ZREM', base .. ':m:' .. f[3], sku) end
  if f[4] == '1' then redis.call('ZREM', base .. ':failed', sku) end
  if (f[5] or '') ~= '' then redis.call('ZREM', base .. ':e:' .. f[5], sku) end
  for w in string.gmatch(f[7] or '', '[^,]+') do redis.call('ZREM', base .. ':w:' .. w, sku) end
end
local function index(sku, f)
  if f[3] ~= '' then redis.call('ZADD', base .. ':m:' .. f[3], 0, sku) end
  if f[4] == '1' then redis.call('ZADD', base .. ':failed', 0, sku) end
  local e = tonumber(f[6])
  if f[5] ~= '' and e then redis.call('ZADD', base .. ':e:' .. f[5], e, sku) end
  for w in string.gmatch(f[7] or '', '[^,]+') do redis.call('ZADD', base .. ':w:' .. w, 0, sku) end
end
local stale = {}
for i = 4, #ARGV, 3 do
  local sku = ARGV[i]
  local cur = redis.call('HGET', KEYS[1], sku)
  if (cur or '') ~= ARGV[i + 1] then
    stale[#stale + 1] = sku
  else
    local old = cur and fields(cur)
    local take = true
    if old and #old == 7 then
      local c = tonumber(old[1])
      if c then take = c < created or (c == created and old[2] <= runId) end
    end
    local value = ARGV[2] .. '|' .. runId .. '|' .. ARGV[i + 2]
    if take and cur ~= value then
      if old then unindex(sku, old) end
      redis.call('HSET', KEYS[1], sku, value)
      index(sku, fields(value))
    end
  end
end
return stale
`

/**
 * KEYS: the summary hash, then the index sets of the SKU's record (declared).
 * ARGV: index key base, sku, the record read before the call.
 * Removes the record and the SKU from its sets; returns 0 when the record
 * changed since it was read (the caller reads it again), else 1.
 */
const FORGET = `
local base = ARGV[1]
local cur = redis.call('HGET', KEYS[1], ARGV[2])
if (cur or '') ~= ARGV[3] then return 0 end
if not cur then return 1 end
local f = {}
for x in string.gmatch(cur .. '|', '([^|]*)|') do f[#f + 1] = x end
local sku = ARGV[2]
if (f[3] or '') ~= '' then redis.call('ZREM', base .. ':m:' .. f[3], sku) end
if f[4] == '1' then redis.call('ZREM', base .. ':failed', sku) end
if (f[5] or '') ~= '' then redis.call('ZREM', base .. ':e:' .. f[5], sku) end
for w in string.gmatch(f[7] or '', '[^,]+') do redis.call('ZREM', base .. ':w:' .. w, sku) end
redis.call('HDEL', KEYS[1], sku)
return 1
`
const PUBLISH_COMMAND = 'almanacPublishSkuSummaries'
const FORGET_COMMAND = 'almanacForgetSkuSummary'
/** Rounds of read-then-write before a SKU written concurrently is reported. */
const MAX_ATTEMPTS = 10

export interface SummaryKeys {
  readonly base: string
  readonly all: string
  readonly failed: string
  model(model: string): string
  warning(code: string): string
  error(measure: string): string
}

/** The summary keys of a tenant (layout above). */
export function summaryKeys(prefix: string, tenant: string): SummaryKeys {
  if (!isValidTenant(tenant)) throw new Error(`invalid tenant for a Redis key: ${JSON.stringify(tenant)}`)
  const base = `${prefix}:t:${tenant}:sum:{${tenant}}`
  return {
    base,
    all: `${base}:all`,
    failed: `${base}:failed`,
    model: (m) => `${base}:m:${m}`,
    warning: (c) => `${base}:w:${c}`,
    error: (m) => `${base}:e:${m}`,
  }
}

/** The index sets a record (or a record tail, with `|` fields) names, as the scripts build them. */
function indexKeysOf(k: SummaryKeys, value: string, fieldOffset: number): string[] {
  const f = value.split('|').slice(fieldOffset)
  const [model = '', failed = '', measure = '', , warnings = ''] = f
  const out: string[] = []
  if (model !== '') out.push(k.model(model))
  if (failed === '1') out.push(k.failed)
  if (measure !== '') out.push(k.error(measure))
  for (const w of warnings.split(',')) if (w !== '') out.push(k.warning(w))
  return out
}

type Call = (...args: (string | number)[]) => Promise<unknown>

export class SkuSummaryStore {
  constructor(
    private readonly redis: RedisClient,
    private readonly opts: { readonly prefix: string },
  ) {
    if (!(PUBLISH_COMMAND in redis)) redis.defineCommand(PUBLISH_COMMAND, { lua: PUBLISH })
    if (!(FORGET_COMMAND in redis)) redis.defineCommand(FORGET_COMMAND, { lua: FORGET })
  }

  keys(tenant: string): SummaryKeys {
    return summaryKeys(this.opts.prefix, tenant)
  }

  private cmd(name: string): Call {
    return ((this.redis as unknown as Record<string, Call>)[name]!).bind(this.redis)
  }

  /**
   * Makes the items' summaries (`[sku, record tail]`, summary-record.ts) the
   * SKUs' summaries unless a newer run holds them, in one script per call
   * (again only for SKUs written meanwhile). Idempotent: a retried chunk changes nothing.
   */
  async publish(tenant: string, runId: string, createdAtMs: number, items: readonly { readonly sku: string; readonly summary: string }[]): Promise<void> {
    if (items.length === 0) return
    const k = this.keys(tenant)
    let todo = items
    for (let attempt = 0; attempt < MAX_ATTEMPTS && todo.length > 0; attempt++) {
      const current = await this.redis.hmget(k.all, ...todo.map((i) => i.sku))
      const declared = new Set<string>()
      const args: (string | number)[] = [k.base, createdAtMs, runId]
      todo.forEach((item, j) => {
        const cur = current[j] ?? ''
        for (const key of indexKeysOf(k, cur, 2)) declared.add(key)
        for (const key of indexKeysOf(k, item.summary, 0)) declared.add(key)
        args.push(item.sku, cur, item.summary)
      })
      const stale = (await this.cmd(PUBLISH_COMMAND)(1 + declared.size, k.all, ...declared, ...args)) as string[]
      const again = new Set(stale)
      todo = todo.filter((i) => again.has(i.sku))
    }
    if (todo.length > 0) throw new Error(`the summaries of ${todo.length} SKUs changed concurrently several times; the chunk is retried`)
  }

  /** Removes the SKU's summary and its place in every index set (its history was deleted). */
  async forget(tenant: string, sku: string): Promise<void> {
    if (!isValidTenant(tenant)) return
    const k = this.keys(tenant)
    for (let attempt = 0; attempt < MAX_ATTEMPTS; attempt++) {
      const cur = await this.redis.hget(k.all, sku)
      if (cur === null) return
      const declared = indexKeysOf(k, cur, 2)
      if ((await this.cmd(FORGET_COMMAND)(1 + declared.length, k.all, ...declared, k.base, sku, cur)) === 1) return
    }
    throw new Error(`the summary of SKU ${sku} changed concurrently several times; retry the delete`)
  }

  /** The SKUs' summary records in the order asked, null where there is none. One HMGET. */
  async getMany(tenant: string, skus: readonly string[]): Promise<(SummaryRecord | null)[]> {
    if (skus.length === 0 || !isValidTenant(tenant)) return skus.map(() => null)
    const values = await this.redis.hmget(this.keys(tenant).all, ...skus)
    return values.map((v, i) => (v === null ? null : decodeSummaryRecord(skus[i]!, v)))
  }
}
