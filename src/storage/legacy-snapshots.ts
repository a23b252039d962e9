import type { RedisClient } from './redis-client.js'
import { isValidRunId, isValidTenant } from './keys.js'
import { decodePoints, encodePoints, isNewer, type ForecastPoints, type LatestRecord } from './latest-record.js'

/**
 * The forecast copies earlier versions kept for accuracy scoring beside the
 * latest-forecast index, because that index expired with result retention:
 *
 *   acc:fc   hash  sku -> `${createdAtMs}|${runId}|${JSON [periods, values]}`
 *
 * under `${prefix}:t:${tenant}:`, no TTL. The latest record now carries the
 * points itself and never expires (latest-record.ts), so nothing writes this
 * hash any more. The run store reads it only for SKUs whose record has no
 * points, moves a found entry into the record (migrate on read) and deletes
 * it; a run that takes the SKUs of a chunk deletes theirs. The hash thus
 * empties as SKUs are forecast again or scored; this module can go once no
 * deployment holds one. During a rolling deploy an older worker may still
 * write an entry (and an older record): both are read as described.
 */
export function legacySnapshotsKey(prefix: string, tenant: string): string {
  if (!isValidTenant(tenant)) throw new Error(`invalid tenant for a Redis key: ${JSON.stringify(tenant)}`)
  return `${prefix}:t:${tenant}:acc:fc`
}

export interface LegacySnapshot {
  readonly createdAtMs: number
  readonly runId: string
  readonly forecast: readonly { readonly period: string; readonly value: number }[]
}

/** An entry, or null when it is malformed. */
export function decodeLegacySnapshot(value: string): LegacySnapshot | null {
  const a = value.indexOf('|')
  const b = a < 0 ? -1 : value.indexOf('|', a + 1)
  if (b < 0) return null
  try {
    const [periods, values] = JSON.parse(value.slice(b + 1)) as [unknown, unknown]
    if (!Array.isArray(periods) || !Array.isArray(values)) return null
    const forecast = periods.flatMap((period, i) => {
      const v = values[i]
      return typeof period === 'string' && typeof v === 'number' ? [{ period, value: v }] : []
    })
    const createdAtMs = Number(value.slice(0, a))
    const runId = value.slice(a + 1, b)
    return Number.isFinite(createdAtMs) && isValidRunId(runId) ? { createdAtMs, runId, forecast } : null
  } catch {
    return null
  }
}

/**
 * The migration step of RunStore.latestPoints, for SKUs whose latest record has
 * no points (or that have none): each forecast copy found that is not older
 * than the SKU's record becomes the record, through `write` (the ordering
 * script: KEYS latest, ARGV createdAtMs, runId, then pairs sku, tail), with the
 * record's producedAt when it names the same run, else the run's creation
 * time. Every copy read is then deleted (a stale one too). Returns the points
 * per entry in the order given (null: no usable copy).
 */
export async function takeLegacySnapshots(
  redis: RedisClient,
  prefix: string,
  tenant: string,
  entries: readonly { readonly sku: string; readonly record: LatestRecord | null }[],
  write: (args: (string | number)[]) => Promise<unknown>,
): Promise<(ForecastPoints | null)[]> {
  if (entries.length === 0) return []
  const key = legacySnapshotsKey(prefix, tenant)
  const values = await redis.hmget(key, ...entries.map((e) => e.sku))
  const byRun = new Map<string, (string | number)[]>()
  const read: string[] = []
  const out = entries.map(({ sku, record }, j): ForecastPoints | null => {
    const value = values[j]
    if (value == null) return null
    read.push(sku)
    const copy = decodeLegacySnapshot(value)
    if (copy === null || (record !== null && isNewer(record, copy))) return null
    const produced = record?.runId === copy.runId ? record.producedAt : new Date(copy.createdAtMs).toISOString()
    const points = encodePoints(copy.forecast)
    const run = `${copy.createdAtMs}|${copy.runId}`
    const args = byRun.get(run) ?? [copy.createdAtMs, copy.runId]
    args.push(sku, `${produced}|${points}`)
    byRun.set(run, args)
    return { runId: copy.runId, points: decodePoints(points) }
  })
  for (const args of byRun.values()) await write(args)
  if (read.length > 0) await redis.hdel(key, ...read)
  return out
}
