import type { RedisClient } from './redis-client.js'
import { isValidTenant, latestKey } from './keys.js'
import type { RunStore } from './run-store.js'
import type { ResultItem } from './types.js'

/**
 * Each SKU's latest successful forecast, kept for accuracy scoring beyond
 * result retention (the actuals of a monthly forecast arrive weeks after its
 * run, when the run's results may be gone).
 *
 *   acc:fc   hash  sku -> `${createdAtMs}|${runId}|${JSON [periods, values]}`
 *
 * under `${prefix}:t:${tenant}:`, no TTL (one entry per SKU).
 */

/**
 * KEYS: acc:fc. ARGV: createdAtMs, runId, then pairs (sku, json).
 * Keeps each SKU's forecast from the run created last (ties: larger run id),
 * as the run store's latest pointer does. Returns how many changed.
 */
const REMEMBER = `
local created = tonumber(ARGV[1])
local changed = 0
for i = 3, #ARGV, 2 do
  local cur = redis.call('HGET', KEYS[1], ARGV[i])
  local take = true
  if cur then
    local a = string.find(cur, '|', 1, true)
    local b = string.find(cur, '|', a + 1, true)
    local curCreated = tonumber(string.sub(cur, 1, a - 1))
    local curRun = string.sub(cur, a + 1, b - 1)
    take = curCreated < created or (curCreated == created and curRun <= ARGV[2])
  end
  if take then
    redis.call('HSET', KEYS[1], ARGV[i], ARGV[1] .. '|' .. ARGV[2] .. '|' .. ARGV[i + 1])
    changed = changed + 1
  end
end
return changed
`
const REMEMBER_COMMAND = 'almanacRememberForecasts'

/** A SKU's latest successful forecast: its run and the point forecast per period label. */
export interface Snapshot {
  readonly runId: string
  readonly points: ReadonlyMap<string, number>
}

export class ForecastSnapshots {
  constructor(
    private readonly redis: RedisClient,
    private readonly runs: Pick<RunStore, 'latest'>,
    private readonly prefix: string,
  ) {
    if (!(REMEMBER_COMMAND in redis)) redis.defineCommand(REMEMBER_COMMAND, { numberOfKeys: 1, lua: REMEMBER })
  }

  private key(tenant: string): string {
    if (!isValidTenant(tenant)) throw new Error(`invalid tenant for a Redis key: ${JSON.stringify(tenant)}`)
    return `${this.prefix}:t:${tenant}:acc:fc`
  }

  /**
   * Keeps the successful forecasts of a committed chunk as each SKU's latest
   * forecast for scoring (unless a run created later holds the SKU already).
   */
  async remember(tenant: string, runId: string, createdAtMs: number, items: readonly ResultItem[]): Promise<number> {
    const args: string[] = [String(createdAtMs), runId]
    for (const item of items) {
      if ('error' in item) continue
      args.push(item.sku, JSON.stringify([item.forecast.map((p) => p.period), item.forecast.map((p) => p.value)]))
    }
    if (args.length === 2) return 0
    const run = (this.redis as unknown as Record<string, (...a: string[]) => Promise<number>>)[REMEMBER_COMMAND]!
    return Number(await run.call(this.redis, this.key(tenant), ...args))
  }

  /** The forecast scoring uses: the remembered one, else the run store's latest. */
  async latest(tenant: string, sku: string): Promise<Snapshot | null> {
    return (await this.latestMany(tenant, [sku]))[0] ?? null
  }

  /**
   * `latest` for many SKUs in the order given: one HMGET of the kept forecasts, one of the
   * run store's latest pointers for the misses, and a read per SKU found only there.
   */
  async latestMany(tenant: string, skus: readonly string[]): Promise<(Snapshot | null)[]> {
    if (skus.length === 0) return []
    const kept = await this.redis.hmget(this.key(tenant), ...skus)
    const out: (Snapshot | null)[] = kept.map((v) => (v === null ? null : decode(v)))
    const misses = skus.flatMap((sku, i) => (out[i] === null ? [i] : []))
    if (misses.length === 0) return out
    const pointers = await this.redis.hmget(latestKey(this.prefix, tenant), ...misses.map((i) => skus[i]!))
    for (const [j, i] of misses.entries()) {
      if (pointers[j] === null) continue
      const latest = await this.runs.latest(tenant, skus[i]!)
      if (latest !== null && !('error' in latest.item)) {
        out[i] = { runId: latest.runId, points: new Map(latest.item.forecast.map((p) => [p.period, p.value])) }
      }
    }
    return out
  }
}

function decode(kept: string): Snapshot {
  const a = kept.indexOf('|')
  const b = kept.indexOf('|', a + 1)
  const [periods, values] = JSON.parse(kept.slice(b + 1)) as [string[], number[]]
  return { runId: kept.slice(a + 1, b), points: new Map(periods.map((p, i) => [p, values[i]!])) }
}
