import { createHash, randomUUID } from 'node:crypto'
import { z } from 'zod'
import { decodeJson } from '../decode.js'
import type { RedisClient } from '../redis.js'
import { isValidTenant } from '../keys.js'

/**
 * Idempotency keys per tenant: `${prefix}:t:${tenant}:idem:<sha256 of the key>`
 * holds `pending:<lease token>` while the first request is in flight (SET NX
 * with a short expiry its owner renews while it works), then the answer to
 * replay: the body hash and the response (status, type, Location, body).
 * A server that crashes stops renewing, so its key frees itself within one lease.
 */

export interface StoredAnswer {
  /** sha256 of method, URL, content type and body. */
  readonly hash: string
  readonly status: number
  readonly contentType: string | null
  readonly location: string | null
  readonly body: string
}

const StoredAnswerRecord = z.object({
  hash: z.string().regex(/^[0-9a-f]{64}$/),
  status: z.number().int().min(100).max(599),
  contentType: z.string().nullable(),
  location: z.string().nullable(),
  body: z.string(),
})

export type IdempotencyEntry = { readonly state: 'pending' } | ({ readonly state: 'done' } & StoredAnswer)

const PENDING = 'pending:'

/** Deletes the key only while this owner's lease holds it (never a stored answer, never another's lease). */
const RELEASE = `if redis.call('GET', KEYS[1]) == ARGV[1] then return redis.call('DEL', KEYS[1]) end return 0`
/** Extends this owner's lease (ARGV[2] ms); 0 when the lease was lost. */
const RENEW = `if redis.call('GET', KEYS[1]) == ARGV[1] then return redis.call('PEXPIRE', KEYS[1], ARGV[2]) end return 0`
/** Stores the answer (ARGV[2], kept ARGV[3] s) only while this owner's lease holds the key. */
const COMPLETE = `if redis.call('GET', KEYS[1]) == ARGV[1] then redis.call('SET', KEYS[1], ARGV[2], 'EX', ARGV[3]) return 1 end return 0`

/** Who holds a key while its request is in flight. */
export interface Lease {
  readonly token: string
}

export interface IdempotencyOptions {
  readonly prefix: string
  /** How long an answer is replayed. Default 24 h. */
  readonly ttlSeconds?: number
  /**
   * How long an in-flight marker outlives its last renewal, i.e. how long a
   * retry after a crash sees 409. Default 30 s; the owner renews every third of it.
   */
  readonly leaseMs?: number
}

export const DEFAULT_LEASE_MS = 30_000

export class IdempotencyStore {
  constructor(
    private readonly redis: RedisClient,
    private readonly opts: IdempotencyOptions,
  ) {}

  private key(tenant: string, idempotencyKey: string): string {
    if (!isValidTenant(tenant)) throw new Error(`invalid tenant for a Redis key: ${JSON.stringify(tenant)}`)
    return `${this.opts.prefix}:t:${tenant}:idem:${createHash('sha256').update(idempotencyKey, 'utf8').digest('hex')}`
  }

  async get(tenant: string, idempotencyKey: string): Promise<IdempotencyEntry | null> {
    const raw = await this.redis.get(this.key(tenant, idempotencyKey))
    if (raw === null) return null
    if (raw.startsWith(PENDING)) return { state: 'pending' }
    return { state: 'done', ...decodeJson(StoredAnswerRecord, raw, 'stored Idempotency-Key answer') }
  }

  get leaseMs(): number {
    return this.opts.leaseMs ?? DEFAULT_LEASE_MS
  }

  /** The lease when this request now owns the key (no other request had it), else null. */
  async claim(tenant: string, idempotencyKey: string): Promise<Lease | null> {
    const token = PENDING + randomUUID()
    const ok = await this.redis.set(this.key(tenant, idempotencyKey), token, 'PX', this.leaseMs, 'NX')
    return ok === 'OK' ? { token } : null
  }

  /** Extends the lease by leaseMs from now; false when it had expired (or was taken over). */
  async renew(tenant: string, idempotencyKey: string, lease: Lease): Promise<boolean> {
    return (await this.redis.eval(RENEW, 1, this.key(tenant, idempotencyKey), lease.token, String(this.leaseMs))) === 1
  }

  /** Stores the answer to replay; false (nothing stored) when the lease had been lost meanwhile. */
  async complete(tenant: string, idempotencyKey: string, lease: Lease, answer: StoredAnswer): Promise<boolean> {
    const ttl = String(this.opts.ttlSeconds ?? 24 * 3600)
    return (await this.redis.eval(COMPLETE, 1, this.key(tenant, idempotencyKey), lease.token, JSON.stringify(answer), ttl)) === 1
  }

  /** Gives the key up (the request failed on our side); a later retry runs afresh. */
  async release(tenant: string, idempotencyKey: string, lease: Lease): Promise<void> {
    await this.redis.eval(RELEASE, 1, this.key(tenant, idempotencyKey), lease.token)
  }
}
