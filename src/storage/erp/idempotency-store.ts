import { createHash } from 'node:crypto'
import { z } from 'zod'
import { decodeJson } from '../decode.js'
import type { RedisClient } from '../redis.js'
import { isValidTenant } from '../keys.js'

/**
 * Idempotency keys per tenant: `${prefix}:t:${tenant}:idem:<sha256 of the key>`
 * holds `pending` while the first request is in flight (SET NX), then the
 * answer to replay: the body hash and the response (status, type, Location, body).
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

const PENDING = 'pending'

/** Deletes the key only while it is still pending (never a stored answer). */
const RELEASE = `if redis.call('GET', KEYS[1]) == ARGV[1] then return redis.call('DEL', KEYS[1]) end return 0`

export interface IdempotencyOptions {
  readonly prefix: string
  /** How long an answer is replayed. Default 24 h. */
  readonly ttlSeconds?: number
  /** How long an in-flight marker survives a crashed server. Default 1 h. */
  readonly pendingTtlSeconds?: number
}

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
    if (raw === PENDING) return { state: 'pending' }
    return { state: 'done', ...decodeJson(StoredAnswerRecord, raw, 'stored Idempotency-Key answer') }
  }

  /** True when this request now owns the key (no other request had it). */
  async claim(tenant: string, idempotencyKey: string): Promise<boolean> {
    const ok = await this.redis.set(this.key(tenant, idempotencyKey), PENDING, 'EX', this.opts.pendingTtlSeconds ?? 3600, 'NX')
    return ok === 'OK'
  }

  async complete(tenant: string, idempotencyKey: string, answer: StoredAnswer): Promise<void> {
    await this.redis.set(this.key(tenant, idempotencyKey), JSON.stringify(answer), 'EX', this.opts.ttlSeconds ?? 24 * 3600)
  }

  /** Gives the key up (the request failed on our side); a later retry runs afresh. */
  async release(tenant: string, idempotencyKey: string): Promise<void> {
    await this.redis.eval(RELEASE, 1, this.key(tenant, idempotencyKey), PENDING)
  }
}
