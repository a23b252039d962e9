import type { RedisClient } from './redis-client.js'
import { isValidRunId, isValidTenant, runKeys } from './keys.js'

/**
 * The delivery log of a run's webhooks.
 *
 *   run:{R}:deliveries   hash  deliveryId -> JSON Delivery   (same hash tag as the run; TTL = results)
 *
 * One writer per delivery at a time (its BullMQ job), so read-modify-write is safe.
 */
export const DELIVERY_STATES = ['pending', 'delivered', 'retrying', 'dead'] as const
export type DeliveryState = (typeof DELIVERY_STATES)[number]

export interface DeliveryAttempt {
  readonly attempt: number
  /** ISO-8601 time the attempt started. */
  readonly at: string
  readonly statusCode: number | null
  readonly error: string | null
  readonly durationMs: number
}

export interface Delivery {
  readonly id: string
  readonly url: string
  readonly event: string
  /** `run`: the run's callbackUrl; `standing`: a callback registered at /v1/callbacks. */
  readonly source: 'run' | 'standing'
  readonly callbackId: string | null
  readonly state: DeliveryState
  readonly maxAttempts: number
  readonly attempts: readonly DeliveryAttempt[]
  readonly createdAt: string
}

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
    return json === null ? null : (JSON.parse(json) as Delivery)
  }

  /** Appends an attempt (replacing one with the same number, e.g. after a crash) and sets the state. */
  async recordAttempt(tenant: string, runId: string, id: string, attempt: DeliveryAttempt, state: DeliveryState): Promise<Delivery | null> {
    const d = await this.get(tenant, runId, id)
    if (d === null) return null
    const attempts = [...d.attempts.filter((a) => a.attempt !== attempt.attempt), attempt].sort((a, b) => a.attempt - b.attempt)
    const next: Delivery = { ...d, attempts, state }
    await this.redis.hset(this.key(tenant, runId), id, JSON.stringify(next))
    return next
  }

  /** Every delivery of the run, oldest first; [] when none. */
  async list(tenant: string, runId: string): Promise<Delivery[]> {
    if (!isValidTenant(tenant) || !isValidRunId(runId)) return []
    const all = Object.values(await this.redis.hgetall(this.key(tenant, runId))).map((j) => JSON.parse(j) as Delivery)
    return all.sort((a, b) => a.createdAt.localeCompare(b.createdAt) || a.id.localeCompare(b.id))
  }
}
