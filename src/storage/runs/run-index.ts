import type { RedisClient } from '../redis.js'
import { isValidRunId, isValidTenant, runIndexKey, runKeys } from '../keys.js'
import { CursorError, decodeCursor, encodeCursor } from '../paging.js'
import { decodeRunRecord } from './run-hash.js'
import type { RunListFilter, RunPage, RunRecord } from '../../runs/contract.js'

/**
 * The tenant's index of run ids by creation time (`runs` in keys.ts), behind
 * GET /v1/runs. Each run is added just before its record is written (the
 * index lies on another slot of a cluster than the run's hash, so the two
 * cannot share a MULTI); an entry whose record never got written or has
 * expired is skipped when listed and removed then. Entries older than the
 * record TTL are checked and removed whenever a run is added
 * (`trim`), so the index follows the records' expiry without a TTL of its own.
 */

/** Oldest entries checked per `trim`: bounded work per run created. */
export const TRIM_BATCH = 100
/** Index entries one page reads at most while filters skip runs; the page then ends early with a cursor. */
export const MAX_EXAMINED_PER_PAGE = 5000
const READ_BATCH = 200

export interface RunIndexOptions {
  readonly prefix: string
  readonly recordTtlSeconds: number
}

interface Position {
  readonly score: number
  readonly runId: string
}

const encodePosition = (p: Position) => encodeCursor(`${p.score}|${p.runId}`)

/** @throws CursorError on a cursor that is not a position in this index. */
function decodePosition(cursor: string): Position {
  const key = decodeCursor(cursor)
  const bar = key.indexOf('|')
  const score = Number(key.slice(0, bar))
  const runId = key.slice(bar + 1)
  if (bar < 1 || !Number.isSafeInteger(score) || !isValidRunId(runId)) throw new CursorError()
  return { score, runId }
}

/** True when `run` passes every filter (creation time is filtered by score in Redis). */
function matches(run: RunRecord, filter: RunListFilter): boolean {
  if (filter.status !== undefined && run.status !== filter.status) return false
  if (filter.origin !== undefined && run.origin.kind !== filter.origin) return false
  if (filter.scheduleId !== undefined && run.origin.scheduleId !== filter.scheduleId) return false
  return true
}

export class RunIndex {
  constructor(
    private readonly redis: RedisClient,
    private readonly opts: RunIndexOptions,
  ) {}

  /** Indexes a run about to be created, then trims entries whose records have expired. */
  async add(tenant: string, runId: string, createdAtMs: number): Promise<void> {
    await this.redis.zadd(runIndexKey(this.opts.prefix, tenant), createdAtMs, runId)
    await this.trim(tenant, createdAtMs)
  }

  /**
   * Removes index entries created longer than the record TTL ago whose record is
   * gone (up to TRIM_BATCH of the oldest). A run that finished late keeps its
   * record longer (the TTL restarts when it ends), so age alone never removes one.
   * Returns how many were removed.
   */
  async trim(tenant: string, nowMs: number): Promise<number> {
    const key = runIndexKey(this.opts.prefix, tenant)
    const old = await this.redis.zrangebyscore(key, '-inf', nowMs - this.opts.recordTtlSeconds * 1000, 'LIMIT', 0, TRIM_BATCH)
    return this.removeGone(tenant, old)
  }

  private async removeGone(tenant: string, runIds: readonly string[]): Promise<number> {
    if (runIds.length === 0) return 0
    // One EXISTS per run: their keys lie on different slots of a cluster.
    const exists = await Promise.all(runIds.map((id) => (isValidRunId(id) ? this.redis.exists(runKeys(this.opts.prefix, tenant, id).run) : 0)))
    const gone = runIds.filter((_, i) => exists[i] === 0)
    if (gone.length > 0) await this.redis.zrem(runIndexKey(this.opts.prefix, tenant), ...gone)
    return gone.length
  }

  /**
   * One page of the tenant's runs, newest first (ties: larger run id first).
   * Reads the index in batches between the creation bounds, skips runs the
   * filters refuse, and stops after MAX_EXAMINED_PER_PAGE entries with a cursor
   * to go on from, so a page can be short, or empty, before the end.
   * @throws CursorError on a cursor this service did not issue.
   */
  async page(tenant: string, filter: RunListFilter, limit: number, cursor?: string): Promise<RunPage> {
    const after = cursor === undefined ? null : decodePosition(cursor)
    if (!isValidTenant(tenant)) return { items: [], nextCursor: null }
    const key = runIndexKey(this.opts.prefix, tenant)
    const n = Math.max(1, Math.floor(limit))
    const upper = Math.min(after?.score ?? Infinity, filter.createdToMs ?? Infinity)
    const min = filter.createdFromMs === undefined ? '-inf' : String(filter.createdFromMs)
    const items: RunRecord[] = []
    let examined = 0
    // Each batch starts at the last entry read (by score, not offset, so runs created or removed meanwhile shift nothing).
    let from: Position | null = after
    let skip = 0
    for (;;) {
      const top = Math.min(from?.score ?? Infinity, upper)
      const raw = await this.redis.zrevrangebyscore(key, top === Infinity ? '+inf' : String(top), min, 'WITHSCORES', 'LIMIT', skip, READ_BATCH)
      const full = raw.length / 2 === READ_BATCH
      const entries: Position[] = []
      for (let i = 0; i < raw.length; i += 2) {
        const position = { runId: raw[i]!, score: Number(raw[i + 1]) }
        // Skip what was read already (ties are ordered by run id, descending), and the end of the range (createdTo is exclusive).
        if (from !== null && position.score === from.score && position.runId >= from.runId) continue
        if (filter.createdToMs !== undefined && position.score >= filter.createdToMs) continue
        entries.push(position)
      }
      // A whole batch of one creation time already read: step over it by offset instead.
      skip = entries.length === 0 && full ? skip + READ_BATCH : 0
      const hashes = await Promise.all(
        entries.map((e) => (isValidRunId(e.runId) ? this.redis.hgetall(runKeys(this.opts.prefix, tenant, e.runId).run) : Promise.resolve({}))),
      )
      const gone: string[] = []
      for (let i = 0; i < entries.length; i++) {
        const run = decodeRunRecord(hashes[i]!)
        examined++
        from = entries[i]!
        if (run === null) gone.push(from.runId)
        else if (matches(run, filter)) items.push(run)
        if (items.length === n) {
          await this.removeGone(tenant, gone)
          const more = i < entries.length - 1 || full
          return { items, nextCursor: more ? encodePosition(from) : null }
        }
      }
      await this.removeGone(tenant, gone)
      if (!full) return { items, nextCursor: null }
      if (examined >= MAX_EXAMINED_PER_PAGE && from !== null) return { items, nextCursor: encodePosition(from) }
    }
  }
}
