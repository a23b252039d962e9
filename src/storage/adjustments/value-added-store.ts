import { z } from 'zod'
import type { RedisClient } from '../redis.js'
import { countOf, decodeJson, finiteOf } from '../decode.js'
import { isValidTenant } from '../keys.js'
import { MAX_POINTS_PER_SERIES } from '../../schemas/run.js'
import type { ValueAddedRecord } from '../../runs/value-added.js'

/**
 * Forecast value added records: per SKU and period, the statistical, final
 * and naive forecasts it had when its actual demand arrived.
 *
 *   fva:<b64url(sku)>   hash  period -> `${actual}|${JSON {runId, statisticalDemand, finalDemand, naiveDemand, author}}`
 *
 * under `${prefix}:t:${tenant}:`, no TTL. A period is recorded once with the
 * forecasts in force when its actual first arrived; a corrected actual
 * replaces only the actual (as the accuracy records do), so an adjustment
 * made later can never rewrite how an earlier one was judged.
 *
 * Unlike the accuracy records these do not follow the stored history, so
 * they would gain one period with every period closed, for ever: a SKU keeps
 * its newest VALUE_ADDED_PERIODS_KEPT periods and the oldest go.
 */

/**
 * Periods of value added kept per SKU: as many as a stored history can hold
 * (MAX_POINTS_PER_SERIES), so value added never reaches further back than a
 * history could, and a monthly SKU never loses one in practice.
 */
export const VALUE_ADDED_PERIODS_KEPT = MAX_POINTS_PER_SERIES

/**
 * KEYS: records. ARGV: periods kept, then triples (period, actual, forecasts JSON).
 * Returns {added, corrected}. Past the periods kept, the oldest periods (labels of
 * one frequency sort as text) are deleted in the same step.
 */
const RECORD = `
local added, corrected = 0, 0
for i = 2, #ARGV, 3 do
  local cur = redis.call('HGET', KEYS[1], ARGV[i])
  if not cur then
    redis.call('HSET', KEYS[1], ARGV[i], ARGV[i + 1] .. '|' .. ARGV[i + 2])
    added = added + 1
  else
    local bar = string.find(cur, '|', 1, true)
    if bar and string.sub(cur, 1, bar - 1) ~= ARGV[i + 1] then
      redis.call('HSET', KEYS[1], ARGV[i], ARGV[i + 1] .. string.sub(cur, bar))
      corrected = corrected + 1
    end
  end
end
local excess = redis.call('HLEN', KEYS[1]) - tonumber(ARGV[1])
if excess > 0 then
  local periods = redis.call('HKEYS', KEYS[1])
  table.sort(periods)
  for i = 1, excess do redis.call('HDEL', KEYS[1], periods[i]) end
end
return {added, corrected}
`
const COMMAND = 'almanacRecordValueAdded'

const Forecasts = z.object({
  runId: z.string(),
  statisticalDemand: z.number(),
  finalDemand: z.number(),
  naiveDemand: z.number(),
  author: z.string().nullable(),
})

export class ValueAddedStore {
  constructor(
    private readonly redis: RedisClient,
    private readonly opts: {
      readonly prefix: string
      /** Periods kept per SKU (the newest); VALUE_ADDED_PERIODS_KEPT when absent. */
      readonly periodsKept?: number
    },
  ) {
    if (!(COMMAND in redis)) redis.defineCommand(COMMAND, { numberOfKeys: 1, lua: RECORD })
  }

  private key(tenant: string, sku: string): string {
    if (!isValidTenant(tenant)) throw new Error(`invalid tenant for a Redis key: ${JSON.stringify(tenant)}`)
    return `${this.opts.prefix}:t:${tenant}:fva:${Buffer.from(sku, 'utf8').toString('base64url')}`
  }

  /** Forgets a SKU's value-added records (its history was deleted). */
  async forget(tenant: string, sku: string): Promise<void> {
    if (!isValidTenant(tenant)) return
    await this.redis.del(this.key(tenant, sku))
  }

  /** Records periods of one SKU (idempotent per period; a changed actual is a correction). */
  async record(tenant: string, sku: string, records: readonly ValueAddedRecord[]): Promise<{ added: number; corrected: number }> {
    if (records.length === 0) return { added: 0, corrected: 0 }
    const args: string[] = [String(Math.max(1, Math.floor(this.opts.periodsKept ?? VALUE_ADDED_PERIODS_KEPT)))]
    for (const r of records) {
      const { runId, statisticalDemand, finalDemand, naiveDemand, author } = r
      args.push(r.period, String(r.actualDemand), JSON.stringify({ runId, statisticalDemand, finalDemand, naiveDemand, author }))
    }
    const run = (this.redis as unknown as Record<string, (...a: string[]) => Promise<unknown[]>>)[COMMAND]!
    const reply = await run.call(this.redis, this.key(tenant, sku), ...args)
    return { added: countOf(reply[0], 'periods added'), corrected: countOf(reply[1], 'periods corrected') }
  }

  /** Every recorded period of a SKU, oldest first (labels of one frequency sort as text). */
  async records(tenant: string, sku: string): Promise<ValueAddedRecord[]> {
    if (!isValidTenant(tenant)) return []
    const h = await this.redis.hgetall(this.key(tenant, sku))
    return Object.entries(h)
      .map(([period, v]) => {
        const bar = v.indexOf('|')
        const actualDemand = finiteOf(bar < 0 ? undefined : v.slice(0, bar), `actual of value-added period ${period}`)
        const f = decodeJson(Forecasts, v.slice(bar + 1), `value-added record of SKU ${sku} for ${period}`)
        return { period, actualDemand, ...f }
      })
      .sort((a, b) => (a.period < b.period ? -1 : a.period > b.period ? 1 : 0))
  }
}
