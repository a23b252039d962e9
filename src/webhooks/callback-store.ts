import { randomUUID } from 'node:crypto'
import type { RedisClient } from '../storage/redis-client.js'
import { isValidTenant } from '../storage/keys.js'
import type { RunEvent } from './names.js'
import { newSigningSecret } from './signing.js'

/**
 * Standing callbacks and the signing secret of each tenant.
 *
 *   ${prefix}:t:${tenant}:callbacks        hash  id -> JSON { id, url, events, createdAt }
 *   ${prefix}:t:${tenant}:webhook-secret   string the HMAC key (no TTL)
 *
 * The secret is stored as is (HMAC needs it): whoever reads Redis can sign.
 */
export interface StandingCallback {
  readonly id: string
  readonly url: string
  readonly events: readonly RunEvent[]
  readonly createdAt: string
}

export const MAX_CALLBACKS_PER_TENANT = 20

export function tenantKey(prefix: string, tenant: string, name: string): string {
  if (!isValidTenant(tenant)) throw new Error(`invalid tenant for a Redis key: ${JSON.stringify(tenant)}`)
  return `${prefix}:t:${tenant}:${name}`
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
    return tenantKey(this.prefix, tenant, 'webhook-secret')
  }

  /** Adds a callback; null when the tenant already has the maximum. */
  async add(tenant: string, url: string, events: readonly RunEvent[], now: Date): Promise<StandingCallback | null> {
    const key = this.callbacksKey(tenant)
    if ((await this.redis.hlen(key)) >= MAX_CALLBACKS_PER_TENANT) return null
    const cb: StandingCallback = { id: randomUUID(), url, events: [...new Set(events)], createdAt: now.toISOString() }
    await this.redis.hset(key, cb.id, JSON.stringify(cb))
    return cb
  }

  /** Oldest first. */
  async list(tenant: string): Promise<StandingCallback[]> {
    if (!isValidTenant(tenant)) return []
    const all = Object.values(await this.redis.hgetall(this.callbacksKey(tenant))).map((j) => JSON.parse(j) as StandingCallback)
    return all.sort((a, b) => a.createdAt.localeCompare(b.createdAt) || a.id.localeCompare(b.id))
  }

  async get(tenant: string, id: string): Promise<StandingCallback | null> {
    if (!isValidTenant(tenant)) return null
    const json = await this.redis.hget(this.callbacksKey(tenant), id)
    return json === null ? null : (JSON.parse(json) as StandingCallback)
  }

  async remove(tenant: string, id: string): Promise<boolean> {
    if (!isValidTenant(tenant)) return false
    return (await this.redis.hdel(this.callbacksKey(tenant), id)) === 1
  }

  /** The tenant's secret, created on first use. */
  async ensureSecret(tenant: string): Promise<string> {
    const key = this.secretKey(tenant)
    await this.redis.set(key, newSigningSecret(), 'NX')
    const secret = await this.redis.get(key)
    if (secret === null) throw new Error('signing secret vanished')
    return secret
  }

  /** True when the tenant has a secret already. */
  async hasSecret(tenant: string): Promise<boolean> {
    return (await this.redis.exists(this.secretKey(tenant))) === 1
  }

  /** Replaces the secret and returns the new one (the only time it is shown). */
  async rotateSecret(tenant: string): Promise<string> {
    const secret = newSigningSecret()
    await this.redis.set(this.secretKey(tenant), secret)
    return secret
  }
}
