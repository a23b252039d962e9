import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest'
import { createHash } from 'node:crypto'
import type { FastifyInstance } from 'fastify'
import { Redis } from 'ioredis'
import { build } from '../../src/http/app.js'
import type { RunGateway } from '../../src/runs/contract.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../helpers/redis.js'
import { runsTestConfig } from '../queue/fixtures.js'
import { InMemoryGatewayDouble } from '../http/gateway-double.js'

// Rate-limit counts kept in a real Redis and shared by two app instances (two API processes).
const sha256 = (s: string) => createHash('sha256').update(s, 'utf8').digest('hex')
const KEY = 'garden-rate-limit-key-0123456789'
const OTHER = 'heating-rate-limit-key-0123456789'

/** TEST DOUBLE: every run is unknown; the limit is what is under test. */
const emptyGateway: RunGateway = {
  submit: async () => {
    throw new Error('not used')
  },
  get: async () => null,
  results: async () => null,
  cancel: async () => null,
  latestForecast: async () => null,
  ping: async () => undefined,
  stats: async () => ({ waiting: 0, active: 0, delayed: 0, failed: 0 }),
}

let url: string
let prefix: string
let redis: Redis
let apps: FastifyInstance[]

beforeAll(async () => {
  url = await redisUrlForTests()
  prefix = uniquePrefix('http-rate-limit')
  redis = new Redis(url, { maxRetriesPerRequest: 2 })
  const config = runsTestConfig(url, prefix, {
    apiKeys: new Map([
      ['garden', [sha256(KEY)]],
      ['heating', [sha256(OTHER)]],
    ]),
    rateLimitMax: 3,
    rateLimitWindowMs: 30_000,
  })
  apps = [
    await build({ config, gateway: emptyGateway, rateLimitRedis: redis }),
    await build({ config, gateway: emptyGateway, rateLimitRedis: redis }),
  ]
})

afterAll(async () => {
  for (const app of apps ?? []) await app.close()
  redis?.disconnect()
  if (url && prefix) await deleteKeys(url, prefix)
})

describe('rate limit in Redis', () => {
  it('counts a tenant across API processes and answers 429 with Retry-After', async () => {
    const codes: number[] = []
    for (let i = 0; i < 4; i++) {
      const res = await apps[i % 2]!.inject({ url: '/v1/runs/run-x', headers: { authorization: `Bearer ${KEY}` } })
      codes.push(res.statusCode)
      if (res.statusCode === 429) {
        expect(Number(res.headers['retry-after'])).toBeGreaterThan(0)
        expect(Number(res.headers['retry-after'])).toBeLessThanOrEqual(30)
        expect(res.json().type).toBe('https://almanac.example/problems/rate-limited')
      }
    }
    expect(codes).toEqual([404, 404, 404, 429])
    const other = await apps[0]!.inject({ url: '/v1/runs/run-x', headers: { authorization: `Bearer ${OTHER}` } })
    expect(other.statusCode).toBe(404)
  })

  it('keeps its counters under the service key prefix', async () => {
    const keys = await redis.keys(`${prefix}:rate-limit:*`)
    expect(keys.sort()).toEqual([`${prefix}:rate-limit:tenant:garden`, `${prefix}:rate-limit:tenant:heating`])
  })
})

describe('304 answers and the Redis counts', () => {
  it('refunds a 304 in Redis, so polling with If-None-Match leaves the budget as it was', async () => {
    const gateway = new InMemoryGatewayDouble()
    const config = runsTestConfig(url, `${prefix}-poll`, { apiKeys: new Map([['garden', [sha256(KEY)]]]), rateLimitMax: 4, rateLimitWindowMs: 30_000 })
    const app = await build({ config, gateway, rateLimitRedis: redis })
    try {
      const headers = { authorization: `Bearer ${KEY}` }
      const posted = await app.inject({ method: 'POST', url: '/v1/runs', headers, payload: { horizon: 1, series: [{ sku: 'RAKE', demand: [1, 2, 3] }] } })
      expect(posted.statusCode).toBe(202)
      const first = await app.inject({ url: `/v1/runs/${posted.json().id}`, headers })
      expect(first.statusCode).toBe(200)
      const counter = `${prefix}-poll:rate-limit:tenant:garden`
      expect(await redis.get(counter)).toBe('2')
      for (let i = 0; i < 8; i++) {
        const poll = await app.inject({ url: `/v1/runs/${posted.json().id}`, headers: { ...headers, 'if-none-match': first.headers.etag as string } })
        expect(poll.statusCode).toBe(304)
      }
      // onResponse runs after the answer is sent: wait for the last refund to land.
      await vi.waitFor(async () => expect(await redis.get(counter)).toBe('2'))
      expect(Number(await redis.pttl(counter))).toBeGreaterThan(0)
    } finally {
      await app.close()
      await deleteKeys(url, `${prefix}-poll`)
    }
  })
})
