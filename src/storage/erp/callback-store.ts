import { randomBytes, randomUUID } from 'node:crypto'
import { decodeJson } from '../decode.js'
import { z } from 'zod'
import type { RedisClient } from '../redis.js'
import { isValidTenant } from '../keys.js'
import { pageOf, type Page } from '../paging.js'
import { RUN_EVENTS, type RunEvent } from '../../runs/contract.js'

/**
 * Standing callbacks and the signing secret of each tenant.
 *
 *   ${prefix}:t:${tenant}:callbacks                  hash    id -> JSON { id, url, events, createdAt }
 *   ${prefix}:t:${tenant}:callback-secret            string  the HMAC key (no TTL)
 *   ${prefix}:t:${tenant}:callback-secret:previous   string  the key before the last rotation, kept
 *                                                            SECRET_GRACE_SECONDS so receivers can switch
 *
 * The secret is stored as is (HMAC needs it): whoever reads Redis can sign.
 */
const StandingCallbackRecord = z.object({
  id: z.string().min(1),
  url: z.string().min(1),
  events: z.array(z.enum(RUN_EVENTS)),
  createdAt: z.string(),
})
export type StandingCallback = z.infer<typeof StandingCallbackRecord>

export const MAX_CALLBACKS_PER_TENANT = 20

/** HSET field ARGV[1] = ARGV[2] unless the hash already holds ARGV[3] fields; 1 when added. */
const ADD_WITHIN_LIMIT = `if redis.call('HLEN', KEYS[1]) >= tonumber(ARGV[3]) then return 0 end redis.call('HSET', KEYS[1], ARGV[1], ARGV[2]) return 1`

/** How long deliveries are also signed with the secret a rotation replaced (a day: common practice for key roll-over). */
export const SECRET_GRACE_SECONDS = 24 * 3600

const SECRET = /^[0-9a-f]{64}$/

export function tenantKey(prefix: string, tenant: string, name: string): string {
  if (!isValidTenant(tenant)) throw new Error(`invalid tenant for a Redis key: ${JSON.stringify(tenant)}`)
  return `${prefix}:t:${tenant}:${name}`
}

/** A value read back from Redis: a checked secret, or an error naming the key. */
/** A new signing secret: 32 random bytes as 64 hex characters. */
export function newSigningSecret(): string {
  return randomBytes(32).toString('hex')
}

function checkedSecret(value: string | null, key: string): string | null {
  if (value === null) return null
  if (!SECRET.test(value)) throw new Error(`${key} does not hold a signing secret`)
  return value
}

export class CallbackStore {
  constructor(
    private readonly redis: RedisClient,
    private readonly prefix: string,
  ) {}

  private callbacksKey(tenant: string) {
    return tenantKey(this.prefix, tenant, 'callbacks')
  }

  private secretKey(tenant: string) {
    return tenantKey(this.prefix, tenant, 'callback-secret')
  }

  /** Adds a callback; null when the tenant already has the maximum. */
  async add(tenant: string, url: string, events: readonly RunEvent[], now: Date): Promise<StandingCallback | null> {
    const key = this.callbacksKey(tenant)
    const cb: StandingCallback = { id: randomUUID(), url, events: [...new Set(events)], createdAt: now.toISOString() }
    // Count and add in one script: concurrent adds cannot all pass the check.
    const added = await this.redis.eval(ADD_WITHIN_LIMIT, 1, key, cb.id, JSON.stringify(cb), String(MAX_CALLBACKS_PER_TENANT))
    return added === 1 ? cb : null
  }

  /** Every callback of the tenant, oldest first. */
  async all(tenant: string): Promise<StandingCallback[]> {
    if (!isValidTenant(tenant)) return []
    const all = Object.values(await this.redis.hgetall(this.callbacksKey(tenant))).map((j) => decodeJson(StandingCallbackRecord, j, `standing callback of tenant ${tenant}`))
    return all.sort((a, b) => a.createdAt.localeCompare(b.createdAt) || a.id.localeCompare(b.id))
  }

  /** One page of the callbacks, oldest first. @throws CursorError on a cursor this service did not issue. */
  async list(tenant: string, limit: number, cursor?: string): Promise<Page<StandingCallback>> {
    return pageOf(await this.all(tenant), (c) => c.id, limit, cursor)
  }

  async get(tenant: string, id: string): Promise<StandingCallback | null> {
    if (!isValidTenant(tenant)) return null
    const json = await this.redis.hget(this.callbacksKey(tenant), id)
    return json === null ? null : decodeJson(StandingCallbackRecord, json, `standing callback ${id}`)
  }

  async remove(tenant: string, id: string): Promise<boolean> {
    if (!isValidTenant(tenant)) return false
    return (await this.redis.hdel(this.callbacksKey(tenant), id)) === 1
  }

  /**
   * The secrets deliveries are signed with: the current one (created on first use),
   * then the one a rotation replaced, while its grace period lasts.
   */
  async signingSecrets(tenant: string): Promise<string[]> {
    const key = this.secretKey(tenant)
    await this.redis.set(key, newSigningSecret(), 'NX')
    const current = checkedSecret(await this.redis.get(key), key)
    if (current === null) throw new Error('signing secret vanished')
    const previous = checkedSecret(await this.redis.get(`${key}:previous`), `${key}:previous`)
    return previous === null || previous === current ? [current] : [current, previous]
  }

  /** True when the tenant has a secret already. */
  async hasSecret(tenant: string): Promise<boolean> {
    return (await this.redis.exists(this.secretKey(tenant))) === 1
  }

  /**
   * Replaces the secret and returns the new one (the only time it is shown). The
   * replaced secret still signs deliveries, beside the new one, for SECRET_GRACE_SECONDS.
   */
  async rotateSecret(tenant: string): Promise<string> {
    const key = this.secretKey(tenant)
    const secret = newSigningSecret()
    const previous = await this.redis.get(key)
    // The secret and its predecessor share the tenant but not a slot on a cluster: two calls.
    if (previous !== null) await this.redis.set(`${key}:previous`, previous, 'EX', SECRET_GRACE_SECONDS)
    await this.redis.set(key, secret)
    return secret
  }
}
