import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createHash } from 'node:crypto'
import type { FastifyInstance } from 'fastify'
import { Redis } from 'ioredis'
import { build } from '../../src/http/app.js'
import type { RunGateway } from '../../src/runs/contract.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../helpers/redis.js'
import { runsTestConfig } from '../queue/fixtures.js'

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
