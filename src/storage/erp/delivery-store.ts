import { z } from 'zod'
import { decodeJson, FailureRecord } from '../decode.js'
import type { RedisClient } from '../redis.js'
import { isValidRunId, isValidTenant, runKeys } from '../keys.js'
import { pageOf, type Page } from '../paging.js'

/**
 * The callback delivery log of a run.
 *
 *   run:{R}:deliveries   hash  deliveryId -> JSON Delivery   (same hash tag as the run; TTL = results)
 *
 * One writer per delivery at a time (its BullMQ job), so read-modify-write is safe.
 */
export const DELIVERY_STATUSES = ['pending', 'delivered', 'retrying', 'dead'] as const
export type DeliveryStatus = (typeof DELIVERY_STATUSES)[number]


const AttemptRecord = z.object({
  attempt: z.number().int().min(1),
  /** ISO-8601 time the attempt started. */
  at: z.string(),
  httpStatus: z.number().int().nullable(),
  failure: FailureRecord.nullable(),
  durationMs: z.number().int().min(0),
})
export type DeliveryAttempt = z.infer<typeof AttemptRecord>

const DeliveryRecord = z.object({
  id: z.string().min(1),
  url: z.string(),
  event: z.string(),
  /** `run`: the run's callbackUrl; `standing`: a callback registered at /v1/callbacks. */
  source: z.enum(['run', 'standing']),
  callbackId: z.string().nullable(),
  status: z.enum(DELIVERY_STATUSES),
  maxAttempts: z.number().int().min(1),
  attempts: z.array(AttemptRecord),
  createdAt: z.string(),
})
export type Delivery = z.infer<typeof DeliveryRecord>

export class DeliveryStore {
  constructor(
    private readonly redis: RedisClient,
    private readonly opts: { readonly prefix: string; readonly ttlSeconds: number },
  ) {}

  private key(tenant: string, runId: string): string {
    return `${runKeys(this.opts.prefix, tenant, runId).run}:deliveries`
  }

  /** Records a new delivery unless it exists already (an event processed twice). */
  async open(tenant: string, runId: string, d: Delivery): Promise<boolean> {
    const key = this.key(tenant, runId)
    const created = await this.redis.hsetnx(key, d.id, JSON.stringify(d))
    await this.redis.expire(key, this.opts.ttlSeconds)
    return created === 1
  }

  async get(tenant: string, runId: string, id: string): Promise<Delivery | null> {
    const json = await this.redis.hget(this.key(tenant, runId), id)
    return json === null ? null : decodeJson(DeliveryRecord, json, `delivery ${id} of run ${runId}`)
  }

  /** Appends an attempt (replacing one with the same number, e.g. after a crash) and sets the status. */
  async recordAttempt(tenant: string, runId: string, id: string, attempt: DeliveryAttempt, status: DeliveryStatus): Promise<Delivery | null> {
    const d = await this.get(tenant, runId, id)
    if (d === null) return null
    const attempts = [...d.attempts.filter((a) => a.attempt !== attempt.attempt), attempt].sort((a, b) => a.attempt - b.attempt)
    const next: Delivery = { ...d, attempts, status }
    await this.redis.hset(this.key(tenant, runId), id, JSON.stringify(next))
    return next
  }

  /** Every delivery of the run, oldest first; [] when none. */
  async all(tenant: string, runId: string): Promise<Delivery[]> {
    if (!isValidTenant(tenant) || !isValidRunId(runId)) return []
    const all = Object.values(await this.redis.hgetall(this.key(tenant, runId))).map((j) => decodeJson(DeliveryRecord, j, `delivery of run ${runId}`))
    return all.sort((a, b) => a.createdAt.localeCompare(b.createdAt) || a.id.localeCompare(b.id))
  }

  /** One page of the run's deliveries, oldest first. @throws CursorError on a cursor this service did not issue. */
  async list(tenant: string, runId: string, limit: number, cursor?: string): Promise<Page<Delivery>> {
    return pageOf(await this.all(tenant, runId), (d) => d.id, limit, cursor)
  }
}
