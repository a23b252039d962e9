import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import { Redis } from 'ioredis'
import { build } from '../../src/http/app.js'
import { MemoryAuthFailureCounts } from '../../src/storage/auth-failures.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../helpers/redis.js'
import { InMemoryGatewayDouble, KEY_GARDEN, auth, testConfig } from './gateway-double.js'

/**
 * Issue 14 finding 8: failed authentications are counted per client address
 * (in Redis, shared by API processes); past the budget the address gets 429
 * before its key is checked, so keys cannot be guessed at full speed.
 */

let url: string
let prefix: string
let redis: Redis
let apps: FastifyInstance[]

beforeAll(async () => {
  url = await redisUrlForTests()
  prefix = uniquePrefix('auth-failures')
  redis = new Redis(url, { maxRetriesPerRequest: 2 })
  const config = testConfig({ redisPrefix: prefix, authFailureMax: 3, authFailureWindowMs: 60_000 })
  apps = [
    await build({ config, gateway: new InMemoryGatewayDouble(), rateLimitRedis: redis }),
    await build({ config, gateway: new InMemoryGatewayDouble(), rateLimitRedis: redis }),
  ]
})
afterAll(async () => {
  for (const app of apps ?? []) await app.close()
  redis?.disconnect()
  if (url && prefix) await deleteKeys(url, prefix)
})

const get = (app: FastifyInstance, remoteAddress: string, headers: Record<string, string>) =>
  app.inject({ url: '/v1/runs/no-such-run', remoteAddress, headers })

describe('failed authentication budget per address', () => {
  // Before the fix every guess got 401, however many came (seen failing).
  it('answers 429 with Retry-After once an address used up its failures, across API processes', async () => {
    const guesser = '203.0.113.7'
    const codes = []
    codes.push((await get(apps[0]!, guesser, auth('guess-0000000000000001'))).statusCode)
    codes.push((await get(apps[1]!, guesser, {})).statusCode)
    codes.push((await get(apps[0]!, guesser, auth('guess-0000000000000002'))).statusCode)
    expect(codes).toEqual([401, 401, 401])
    const blocked = await get(apps[1]!, guesser, auth('guess-0000000000000003'))
    expect(blocked.statusCode).toBe(429)
    expect(Number(blocked.headers['retry-after'])).toBeGreaterThan(50)
    expect(blocked.json()).toMatchObject({
      type: 'https://almanac.example/problems/rate-limited',
      detail: expect.stringMatching(/^Too many failed authentications from this address \(at most 3 per 60 s\); retry in \d+ s$/),
    })
    // The key is not even checked while the address is blocked: a right guess is not confirmed.
    expect((await get(apps[0]!, guesser, auth(KEY_GARDEN))).statusCode).toBe(429)
    // Another address is not affected.
    expect((await get(apps[0]!, '198.51.100.20', auth(KEY_GARDEN))).statusCode).toBe(404)
  })

  it('does not count successful requests', async () => {
    for (let i = 0; i < 10; i++) expect((await get(apps[i % 2]!, '198.51.100.30', auth(KEY_GARDEN))).statusCode).toBe(404)
  })
})

describe('MemoryAuthFailureCounts', () => {
  it('counts within a window, starts afresh after it and keeps a bounded number of addresses', async () => {
    let now = 1_000
    const counts = new MemoryAuthFailureCounts(100, () => now)
    await counts.record('a')
    await counts.record('a')
    expect(await counts.current('a')).toEqual({ count: 2, resetMs: 100 })
    now += 100
    expect(await counts.current('a')).toEqual({ count: 0, resetMs: 0 })
    await counts.record('a')
    expect(await counts.current('a')).toEqual({ count: 1, resetMs: 100 })
    for (let i = 0; i < 10_000; i++) await counts.record(`x${i}`)
    // 'a' was the oldest window: dropped to keep the map at 10,000 addresses.
    expect(await counts.current('a')).toEqual({ count: 0, resetMs: 0 })
    expect(await counts.current('x9999')).toEqual({ count: 1, resetMs: 100 })
  })
})
