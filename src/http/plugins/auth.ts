import { createHash, timingSafeEqual } from 'node:crypto'
import fp from 'fastify-plugin'
import type { FastifyRequest } from 'fastify'
import { ProblemError } from '../../errors.js'
import { MemoryAuthFailureCounts, RedisAuthFailureCounts, type AuthFailureCounts } from '../../storage/auth-failures.js'
import type { RedisClient } from '../../storage/redis.js'

export const DEFAULT_TENANT = 'default'

interface KeyEntry {
  readonly tenant: string
  readonly digest: Buffer
}

/** True for routes that answer without a key: health, metrics and the API docs. */
function isPublic(request: FastifyRequest): boolean {
  if (request.routeOptions.config?.auth === false) return true
  const url = request.routeOptions.url
  return url !== undefined && (url === '/docs' || url.startsWith('/docs/'))
}

/**
 * `Authorization: Bearer <key>` -> tenant. The presented key is hashed with
 * SHA-256 and compared with every configured digest in constant time, so
 * neither the match nor its position leaks through timing.
 * Without configured keys every request is tenant `default`.
 *
 * Failed attempts (no key, or a wrong one) are counted per client address
 * (`request.ip`: the socket's peer unless fastify's trustProxy is set): past
 * authFailureMax in a window, that address gets 429 without its key being
 * checked, so guessing keys is throttled. The per-tenant rate limit cannot do
 * this, as it only runs once the tenant is known. If Redis fails, the count is
 * skipped and the request goes on (as the rate limit does).
 */
export default fp<{ redis?: RedisClient }>(
  async (app, opts) => {
    const max = app.config.authFailureMax ?? 20
    const windowMs = app.config.authFailureWindowMs ?? 60_000
    const failures: AuthFailureCounts = opts.redis
      ? new RedisAuthFailureCounts(opts.redis, { prefix: app.config.redisPrefix, windowMs })
      : new MemoryAuthFailureCounts(windowMs)
    const guarded = async <T>(what: string, request: FastifyRequest, op: () => Promise<T>): Promise<T | null> => {
      try {
        return await op()
      } catch (err) {
        request.log.warn({ err }, `could not ${what} failed authentications`)
        return null
      }
    }

    const entries: KeyEntry[] = []
    for (const [tenant, digests] of app.config.apiKeys) {
      for (const hex of digests) entries.push({ tenant, digest: Buffer.from(hex, 'hex') })
    }
    const authOff = entries.length === 0

    app.decorateRequest('tenant', '')
    app.addHook('onRequest', async (request, reply) => {
      if (authOff) {
        request.tenant = DEFAULT_TENANT
        request.log = request.log.child({ tenant: DEFAULT_TENANT })
        reply.log = request.log
        return
      }
      if (isPublic(request)) return
      const address = request.ip
      const seen = await guarded('read', request, () => failures.current(address))
      if (seen !== null && seen.count >= max) {
        const retryAfter = Math.max(1, Math.ceil(seen.resetMs / 1000))
        throw new ProblemError(
          'rate-limited',
          `Too many failed authentications from this address (at most ${max} per ${Math.round(windowMs / 1000)} s); retry in ${retryAfter} s`,
          undefined,
          { 'retry-after': String(retryAfter) },
        )
      }
      const match = /^Bearer +(\S+) *$/i.exec(request.headers.authorization ?? '')
      if (!match) {
        await guarded('count', request, () => failures.record(address))
        throw new ProblemError('unauthorized', 'Send an API key as Authorization: Bearer <key>', undefined, {
          'www-authenticate': 'Bearer realm="almanac"',
        })
      }
      const presented = createHash('sha256').update(match[1] ?? '', 'utf8').digest()
      let tenant: string | undefined
      for (const entry of entries) {
        const equal = entry.digest.length === presented.length && timingSafeEqual(entry.digest, presented)
        if (equal && tenant === undefined) tenant = entry.tenant
      }
      if (tenant === undefined) {
        await guarded('count', request, () => failures.record(address))
        throw new ProblemError('unauthorized', 'The API key is not valid', undefined, {
          'www-authenticate': 'Bearer realm="almanac", error="invalid_token"',
        })
      }
      request.tenant = tenant
      request.log = request.log.child({ tenant })
      reply.log = request.log
    })
  },
  { name: 'auth', dependencies: ['config'] },
)
