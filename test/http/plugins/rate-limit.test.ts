import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import { build } from '../../../src/http/app.js'
import { InMemoryGatewayDouble, KEY_GARDEN, KEY_HEATING, auth, testConfig } from '../gateway-double.js'

// In-memory store here; test/integration/http-rate-limit.test.ts checks the Redis store.
describe('per-tenant rate limit', () => {
  let app: FastifyInstance
  beforeAll(async () => {
    app = await build({ config: testConfig({ rateLimitMax: 2, rateLimitWindowMs: 60_000 }), gateway: new InMemoryGatewayDouble() })
  })
  afterAll(() => app.close())

  const get = (key: string) => app.inject({ url: '/v1/runs/run-1', headers: auth(key) })

  it('answers 429 with Retry-After once a tenant used its budget; other tenants are unaffected', async () => {
    expect((await get(KEY_GARDEN)).statusCode).toBe(404)
    expect((await get(KEY_GARDEN)).statusCode).toBe(404)
    const limited = await get(KEY_GARDEN)
    expect(limited.statusCode).toBe(429)
    expect(Number(limited.headers['retry-after'])).toBeGreaterThan(0)
    expect(Number(limited.headers['retry-after'])).toBeLessThanOrEqual(60)
    expect(limited.headers['content-type']).toBe('application/problem+json; charset=utf-8')
    expect(limited.json()).toMatchInlineSnapshot(`
      {
        "detail": "At most 2 requests per 60 s per tenant; retry in 1 minute",
        "status": 429,
        "title": "Too many requests",
        "type": "https://almanac.example/problems/rate-limited",
      }
    `)

    expect((await get(KEY_HEATING)).statusCode).toBe(404)
  })

  it('does not count health checks or metrics scrapes', async () => {
    for (let i = 0; i < 5; i++) {
      expect((await app.inject({ url: '/healthz' })).statusCode).toBe(200)
      expect((await app.inject({ url: '/metrics' })).statusCode).toBe(200)
    }
  })
})
