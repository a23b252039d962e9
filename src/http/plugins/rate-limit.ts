import fp from 'fastify-plugin'
import rateLimit, { type FastifyRateLimitStoreCtor } from '@fastify/rate-limit'
import type { FastifyRequest } from 'fastify'
import type { RedisClient } from '../../storage/redis.js'
import { MemoryRequestCounts, RedisRequestCounts, type RequestCounts } from '../../storage/request-counts.js'
import { ProblemError } from '../../errors.js'

declare module 'fastify' {
  interface FastifyRequest {
    /** The rate-limit key this request was counted under; unset when it was not counted. */
    rateLimitKey?: string
  }
}

/**
 * True for the interactive API page and its files (/docs, /docs/...): static
 * files, public, and loaded dozens at a time by a browser. The workbench's
 * files (/app/) and /openapi.json opt out by route config instead.
 */
function isStaticFile(request: FastifyRequest): boolean {
  const url = request.routeOptions.url
  return url !== undefined && (url === '/docs' || url.startsWith('/docs/'))
}

/**
 * Per-tenant request budget: config.rateLimitMax requests per
 * config.rateLimitWindowMs, counted in Redis so every API process shares it.
 * Without a Redis client (unit tests) the counts stay in memory.
 * Runs after auth (route-level onRequest hooks follow the app-level auth hook),
 * so the key is the tenant. Routes with `config.rateLimit: false` are exempt.
 * If Redis fails mid-request the request is let through (readiness reports it).
 *
 * Polling is cheap and does not spend the budget: a request is counted when it
 * arrives (so a tenant over budget is refused before any work), and a 304 answer
 * (If-None-Match matched; plugins/etag.ts) is refunded once sent. Static files
 * (the docs page's, the workbench's) are never counted.
 */
export default fp<{ redis?: RedisClient }>(
  async (app, opts) => {
    const { rateLimitMax, rateLimitWindowMs, redisPrefix } = app.config
    const counts: RequestCounts = opts.redis
      ? new RedisRequestCounts(opts.redis, `${redisPrefix}:rate-limit:`)
      : new MemoryRequestCounts()
    // The plugin builds its store with `new`; this hands it the counts made here, so the refund below reaches them.
    const store = function RequestCountsStore() {
      return counts
    } as unknown as FastifyRateLimitStoreCtor
    await app.register(rateLimit, {
      global: true,
      max: rateLimitMax,
      timeWindow: rateLimitWindowMs,
      store,
      skipOnError: true,
      keyGenerator: (request) => (request.tenant ? `tenant:${request.tenant}` : `ip:${request.ip}`),
      // Called for every request the limit applies to, just before it is counted.
      allowList: (request, key) => {
        if (isStaticFile(request)) return true
        request.rateLimitKey = key
        return false
      },
      errorResponseBuilder: (_request, context) =>
        new ProblemError(
          'rate-limited',
          `At most ${context.max} requests per ${Math.round(rateLimitWindowMs / 1000)} s per tenant; retry in ${context.after}`,
        ),
    })
    app.addHook('onResponse', async (request, reply) => {
      if (reply.statusCode !== 304 || request.rateLimitKey === undefined) return
      try {
        await counts.refund(request.rateLimitKey)
      } catch (err) {
        request.log.warn({ err }, 'could not refund a 304 to the rate limit')
      }
    })
  },
  { name: 'rate-limit', dependencies: ['config', 'auth'] },
)
