import fp from 'fastify-plugin'
import rateLimit from '@fastify/rate-limit'
import type { RedisClient } from '../../storage/redis.js'
import { ProblemError } from '../../errors.js'

/**
 * Per-tenant request budget: config.rateLimitMax requests per
 * config.rateLimitWindowMs, counted in Redis so every API process shares it.
 * Without a Redis client (unit tests) the counts stay in memory.
 * Runs after auth (route-level onRequest hooks follow the app-level auth hook),
 * so the key is the tenant. Routes with `config.rateLimit: false` are exempt.
 * If Redis fails mid-request the request is let through (readiness reports it).
 */
export default fp<{ redis?: RedisClient }>(
  async (app, opts) => {
    const { rateLimitMax, rateLimitWindowMs, redisPrefix } = app.config
    await app.register(rateLimit, {
      global: true,
      max: rateLimitMax,
      timeWindow: rateLimitWindowMs,
      redis: opts.redis,
      nameSpace: `${redisPrefix}:rate-limit:`,
      skipOnError: true,
      keyGenerator: (request) => (request.tenant ? `tenant:${request.tenant}` : `ip:${request.ip}`),
      errorResponseBuilder: (_request, context) =>
        new ProblemError(
          'rate-limited',
          `At most ${context.max} requests per ${Math.round(rateLimitWindowMs / 1000)} s per tenant; retry in ${context.after}`,
        ),
    })
  },
  { name: 'rate-limit', dependencies: ['config', 'auth'] },
)
