import { randomUUID } from 'node:crypto'
import { z } from 'zod'
import { decodeJson, FailureRecord, StoredValueError } from '../decode.js'
import type { RedisClient } from '../redis.js'
import { RunScope, RunSettings, toRunScope, type RunScope as Scope } from '../../schemas/run.js'
import { isValidTenant } from '../keys.js'
import { pageOf, type Page } from '../paging.js'
import type { Failure } from '../../runs/contract.js'

/**
 * Overnight schedules per tenant.
 *
 *   sched:index        zset  schedule id, score = creation time in ms (listing order)
 *   sched:<id>         hash  def (JSON ScheduleDefinition, `paused` included), runId (current run), lastFiredAt,
 *                            submitted, skipped, failed, missingSkus (counters), lastFailure (JSON)
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
const DefinitionRecord = z.object({
  id: z.string().min(1),
  name: z.string().nullable(),
  cron: z.string().min(1),
  timeZone: z.string().min(1),
  scope: RunScope,
  settings: RunSettings,
  paused: z.boolean(),
  createdAt: z.string(),
})

export interface ScheduleDefinition {
  readonly id: string
  readonly name: string | null
  readonly cron: string
  readonly timeZone: string
  readonly scope: Scope
  readonly settings: RunSettings
  /** A paused schedule does not fire (its job scheduler is removed; the fire handler checks too). */
  readonly paused: boolean
  readonly createdAt: string
}

/** What the schedule's firings did so far. */
export interface Firings {
  /** Firings that submitted a run. */
  readonly submitted: number
  /** Firings skipped because the run of the previous one was still queued or running. */
  readonly skipped: number
  /** Firings whose run could not be submitted. */
  readonly failed: number
  /** SKUs named in `scope.skus` that had no stored history when a firing ran, summed over firings. */
  readonly missingSkus: number
  readonly lastFiredAt: string | null
  /** Run of the latest firing that submitted one. */
  readonly currentRunId: string | null
  readonly lastFailure: Failure | null
}

export type Schedule = ScheduleDefinition & { readonly firings: Firings }

export const MAX_SCHEDULES_PER_TENANT = 100

/** HSET KEYS[1] def ARGV[1] when the hash exists; 1 when written. */
const REPLACE_DEF = `if redis.call('EXISTS', KEYS[1]) == 0 then return 0 end redis.call('HSET', KEYS[1], 'def', ARGV[1]) return 1`

/** ZADD ARGV[1] ARGV[2] unless the index already holds ARGV[3] members; 1 when added. */
const CLAIM_PLACE = `if redis.call('ZCARD', KEYS[1]) >= tonumber(ARGV[3]) then return 0 end redis.call('ZADD', KEYS[1], ARGV[1], ARGV[2]) return 1`

const SCHEDULE_ID = /^[A-Za-z0-9-]{1,64}$/

const Count = z.coerce.number().int().min(0)
const FiringsHash = z.object({
  def: z.string(),
  runId: z.string().optional(),
  lastFiredAt: z.string().optional(),
  submitted: Count.default(0),
  skipped: Count.default(0),
  failed: Count.default(0),
  missingSkus: Count.default(0),
  lastFailure: z.string().optional(),
})

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

  /** Stores a new schedule, not paused; null when the tenant has the maximum already. */
  async create(tenant: string, def: Omit<ScheduleDefinition, 'id' | 'createdAt' | 'paused'>, now: Date): Promise<ScheduleDefinition | null> {
    const full: ScheduleDefinition = { id: randomUUID(), ...def, paused: false, createdAt: now.toISOString() }
    // The index entry is the claim on a place, counted and added in one script so concurrent
    // creates cannot all pass the check (the schedule's own hash lies on another cluster slot).
    const index = `${this.base(tenant)}:index`
    if ((await this.redis.eval(CLAIM_PLACE, 1, index, String(now.getTime()), full.id, String(MAX_SCHEDULES_PER_TENANT))) !== 1) return null
    try {
      await this.redis.hset(this.key(tenant, full.id), 'def', JSON.stringify(full), 'submitted', 0, 'skipped', 0, 'failed', 0, 'missingSkus', 0)
    } catch (err) {
      await this.redis.zrem(index, full.id).catch(() => undefined)
      throw err
    }
    return full
  }

  /**
   * Replaces the definition of an existing schedule (its id and createdAt stay; the
   * firing counters are untouched). Null when there is no such schedule.
   */
  async update(tenant: string, id: string, def: Omit<ScheduleDefinition, 'id' | 'createdAt'>): Promise<Schedule | null> {
    const current = await this.get(tenant, id)
    if (current === null) return null
    const full: ScheduleDefinition = { id, ...def, createdAt: current.createdAt }
    if ((await this.redis.eval(REPLACE_DEF, 1, this.key(tenant, id), JSON.stringify(full))) !== 1) return null
    return { ...full, firings: current.firings }
  }

  async get(tenant: string, id: string): Promise<Schedule | null> {
    if (!isValidTenant(tenant) || !SCHEDULE_ID.test(id)) return null
    return decode(await this.redis.hgetall(this.key(tenant, id)))
  }

  /**
   * One page of the tenant's schedules, oldest first.
   * @throws CursorError on a cursor this service did not issue.
   */
  async list(tenant: string, limit: number, cursor?: string): Promise<Page<Schedule>> {
    if (!isValidTenant(tenant)) return { items: [], nextCursor: null }
    // At most MAX_SCHEDULES_PER_TENANT ids; the page is cut from the whole index.
    const ids = await this.redis.zrange(`${this.base(tenant)}:index`, 0, -1)
    const page = pageOf(ids, (id) => id, limit, cursor)
    // One HGETALL per schedule, all in flight at once (their keys lie on different slots of a cluster).
    const rows = await Promise.all(page.items.map((id) => this.redis.hgetall(this.key(tenant, id))))
    return { items: rows.map((h) => decode(h)).filter((s): s is Schedule => s !== null), nextCursor: page.nextCursor }
  }

  async remove(tenant: string, id: string): Promise<boolean> {
    if (!isValidTenant(tenant) || !SCHEDULE_ID.test(id)) return false
    const n = await this.redis.del(this.key(tenant, id))
    await this.redis.zrem(`${this.base(tenant)}:index`, id)
    return n === 1
  }

  /** A firing submitted a run (`missingSkus`: SKUs of its scope without a history). No-op when the schedule was deleted meanwhile. */
  async recordSubmitted(tenant: string, id: string, runId: string, missingSkus: number, now: Date): Promise<void> {
    const key = this.key(tenant, id)
    if (!(await this.redis.exists(key))) return
    await this.redis
      .multi()
      .hset(key, 'runId', runId, 'lastFiredAt', now.toISOString())
      .hdel(key, 'lastFailure')
      .hincrby(key, 'submitted', 1)
      .hincrby(key, 'missingSkus', missingSkus)
      .exec()
  }

  /** A firing found the previous run still going. */
  async recordSkipped(tenant: string, id: string, now: Date): Promise<void> {
    const key = this.key(tenant, id)
    if (!(await this.redis.exists(key))) return
    await this.redis.multi().hset(key, 'lastFiredAt', now.toISOString()).hincrby(key, 'skipped', 1).exec()
  }

  async recordFailed(tenant: string, id: string, failure: Failure, now: Date): Promise<void> {
    const key = this.key(tenant, id)
    if (!(await this.redis.exists(key))) return
    const stored = JSON.stringify({ code: failure.code, message: failure.message.slice(0, 500) })
    await this.redis.multi().hset(key, 'lastFiredAt', now.toISOString(), 'lastFailure', stored).hincrby(key, 'failed', 1).exec()
  }
}

/** A schedule hash (HGETALL) as a Schedule; null when there is none. @throws StoredValueError when it does not decode. */
function decode(h: Record<string, string>): Schedule | null {
  if (Object.keys(h).length === 0) return null
  const parsed = FiringsHash.safeParse(h)
  if (!parsed.success) throw new StoredValueError(`schedule hash does not decode: ${parsed.error.message}`)
  const f = parsed.data
  const def = decodeJson(DefinitionRecord, f.def, 'schedule definition')
  return {
    ...def,
    scope: toRunScope(def.scope),
    firings: {
      submitted: f.submitted,
      skipped: f.skipped,
      failed: f.failed,
      missingSkus: f.missingSkus,
      lastFiredAt: f.lastFiredAt ?? null,
      currentRunId: f.runId ?? null,
      lastFailure: f.lastFailure === undefined ? null : decodeJson(FailureRecord, f.lastFailure, 'schedule lastFailure'),
    },
  }
}
