import { randomUUID } from 'node:crypto'
import type { RedisClient } from './redis-client.js'
import type { RunSettings } from '../schemas/run.js'
import { isValidTenant } from './keys.js'

/**
 * Overnight schedules per tenant.
 *
 *   sched:index        zset  schedule id, score = creation time in ms (listing order)
 *   sched:<id>         hash  def (JSON ScheduleDefinition), runId (current run), lastFiredAt,
 *                            fired, skipped, failed (counters), lastError
 *
 * under `${prefix}:t:${tenant}:`. Schedules are configuration: no TTL.
 *
 * Redis Cluster: a schedule's hash and the index lie in different slots of a cluster, so
 * they are never written in one MULTI or read in one pipeline. The hash is the
 * truth: `create` writes it before indexing it and `remove` deletes it before
 * unindexing it, so a process dying in between leaves at worst an unlisted
 * hash (create; nothing fires it yet) or an index entry without a hash
 * (remove; `list` skips it, it counts toward the per-tenant maximum).
 */
export type ScheduleSelection = { readonly skus: readonly string[] } | { readonly tags: readonly string[] } | { readonly all: true }

export interface ScheduleDefinition {
  readonly id: string
  readonly name: string | null
  readonly cron: string
  readonly timeZone: string
  readonly selection: ScheduleSelection
  readonly settings: RunSettings
  readonly createdAt: string
}

export interface ScheduleState {
  readonly currentRunId: string | null
  readonly lastFiredAt: string | null
  readonly fired: number
  readonly skipped: number
  readonly failed: number
  readonly lastError: string | null
}

export type Schedule = ScheduleDefinition & { readonly state: ScheduleState }

export const MAX_SCHEDULES_PER_TENANT = 100

const SCHEDULE_ID = /^[A-Za-z0-9-]{1,64}$/

export class ScheduleStore {
  constructor(
    private readonly redis: RedisClient,
    private readonly prefix: string,
  ) {}

  private base(tenant: string): string {
    if (!isValidTenant(tenant)) throw new Error(`invalid tenant for a Redis key: ${JSON.stringify(tenant)}`)
    return `${this.prefix}:t:${tenant}:sched`
  }

  private key(tenant: string, id: string): string {
    return `${this.base(tenant)}:${id}`
  }

  /** Stores a new schedule; null when the tenant has the maximum already. */
  async create(tenant: string, def: Omit<ScheduleDefinition, 'id' | 'createdAt'>, now: Date): Promise<ScheduleDefinition | null> {
    if ((await this.redis.zcard(`${this.base(tenant)}:index`)) >= MAX_SCHEDULES_PER_TENANT) return null
    const full: ScheduleDefinition = { id: randomUUID(), ...def, createdAt: now.toISOString() }
    await this.redis.hset(this.key(tenant, full.id), 'def', JSON.stringify(full), 'fired', 0, 'skipped', 0, 'failed', 0)
    await this.redis.zadd(`${this.base(tenant)}:index`, now.getTime(), full.id)
    return full
  }

  async get(tenant: string, id: string): Promise<Schedule | null> {
    if (!isValidTenant(tenant) || !SCHEDULE_ID.test(id)) return null
    return decode(await this.redis.hgetall(this.key(tenant, id)))
  }

  /** Oldest first, at most `limit` after `afterId` (exclusive). */
  async list(tenant: string, limit: number, afterId?: string): Promise<{ items: Schedule[]; nextCursor: string | null }> {
    if (!isValidTenant(tenant)) return { items: [], nextCursor: null }
    const ids = await this.redis.zrange(`${this.base(tenant)}:index`, 0, -1)
    const from = afterId === undefined ? 0 : ids.indexOf(afterId) + 1
    const page = ids.slice(from, from + limit)
    // One HGETALL per schedule, all in flight at once (their keys lie on different slots of a cluster).
    const rows = await Promise.all(page.map((id) => this.redis.hgetall(this.key(tenant, id))))
    const items = rows.map((h) => decode(h)).filter((s): s is Schedule => s !== null)
    return { items, nextCursor: from + limit < ids.length ? (page[page.length - 1] ?? null) : null }
  }

  async remove(tenant: string, id: string): Promise<boolean> {
    if (!isValidTenant(tenant) || !SCHEDULE_ID.test(id)) return false
    const n = await this.redis.del(this.key(tenant, id))
    await this.redis.zrem(`${this.base(tenant)}:index`, id)
    return n === 1
  }

  /** A fire submitted a run. No-op when the schedule was deleted meanwhile. */
  async recordFired(tenant: string, id: string, runId: string, now: Date): Promise<void> {
    const key = this.key(tenant, id)
    if (!(await this.redis.exists(key))) return
    await this.redis.multi().hset(key, 'runId', runId, 'lastFiredAt', now.toISOString()).hdel(key, 'lastError').hincrby(key, 'fired', 1).exec()
  }

  /** A fire found the previous run still going. */
  async recordSkipped(tenant: string, id: string, now: Date): Promise<void> {
    const key = this.key(tenant, id)
    if (!(await this.redis.exists(key))) return
    await this.redis.multi().hset(key, 'lastFiredAt', now.toISOString()).hincrby(key, 'skipped', 1).exec()
  }

  async recordFailed(tenant: string, id: string, error: string, now: Date): Promise<void> {
    const key = this.key(tenant, id)
    if (!(await this.redis.exists(key))) return
    await this.redis
      .multi()
      .hset(key, 'lastFiredAt', now.toISOString(), 'lastError', error.slice(0, 500))
      .hincrby(key, 'failed', 1)
      .exec()
  }
}

function decode(h: Record<string, string>): Schedule | null {
  if (!h.def) return null
  const def = JSON.parse(h.def) as ScheduleDefinition
  return {
    ...def,
    state: {
      currentRunId: h.runId ?? null,
      lastFiredAt: h.lastFiredAt ?? null,
      fired: Number(h.fired ?? 0),
      skipped: Number(h.skipped ?? 0),
      failed: Number(h.failed ?? 0),
      lastError: h.lastError ?? null,
    },
  }
}
