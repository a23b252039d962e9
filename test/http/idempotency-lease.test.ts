import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import { Redis } from 'ioredis'
import { build } from '../../src/http/app.js'
import type { RunRecord } from '../../src/runs/contract.js'
import type { RunRequest } from '../../src/schemas/run.js'
import { IdempotencyStore } from '../../src/storage/erp/idempotency-store.js'
import { HistoryStore } from '../../src/storage/histories/history-store.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../helpers/redis.js'
import { InMemoryGatewayDouble, KEY_GARDEN, auth, testConfig } from './gateway-double.js'
import { buildHostileApp, type HostileApp } from './hostile-helpers.js'

/**
 * Issue 14 finding 7: an in-flight Idempotency-Key is a lease its request
 * renews. A server that crashes stops renewing, so a retry runs once the lease
 * has run out instead of seeing 409 for an hour. Short leases keep the test quick.
 */

const LEASE_MS = 300
let url: string
let prefix: string
let redis: Redis
let app: FastifyInstance
let gateway: InMemoryGatewayDouble

beforeAll(async () => {
  url = await redisUrlForTests()
  prefix = uniquePrefix('idempotency-lease')
  redis = new Redis(url, { maxRetriesPerRequest: 2 })
  gateway = new InMemoryGatewayDouble()
  app = await build({
    config: testConfig({ redisPrefix: prefix }),
    gateway,
    histories: new HistoryStore(redis, { prefix }),
    idempotency: new IdempotencyStore(redis, { prefix, leaseMs: LEASE_MS }),
  })
})
afterAll(async () => {
  await app?.close()
  redis?.disconnect()
  await deleteKeys(url, prefix)
})

const REQUEST = { horizon: 3, frequency: 'month', series: [{ sku: 'LOG-STORE-1', demand: [4, 6, 5, 7] }] }
const postRun = (key: string) =>
  app.inject({ method: 'POST', url: '/v1/runs', headers: { ...auth(KEY_GARDEN), 'idempotency-key': key }, payload: REQUEST })
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms))

describe('Idempotency-Key lease', () => {
  // Before the fix the key stayed "pending" for an hour and the retry kept getting 409 (seen failing).
  it('frees a key whose owner crashed once the lease runs out', async () => {
    // The crashed server: claimed the key, then never renewed, answered or released it.
    const crashed = new IdempotencyStore(redis, { prefix, leaseMs: LEASE_MS })
    expect(await crashed.claim('garden', 'crash-key')).not.toBeNull()
    const early = await postRun('crash-key')
    expect(early.statusCode).toBe(409)
    expect(early.headers['retry-after']).toBe('1')
    await sleep(LEASE_MS * 2)
    const retry = await postRun('crash-key')
    expect(retry.statusCode).toBe(202)
    expect(retry.headers['almanac-reused-answer']).toBeUndefined()
    expect((await postRun('crash-key')).headers['almanac-reused-answer']).toBe('true')
  })

  it('keeps the key while its request works for many leases, and keeps the answer after', async () => {
    let release!: () => void
    const gate = new Promise<void>((r) => (release = r))
    const submit = gateway.submit.bind(gateway)
    gateway.submit = async (tenant: string, request: RunRequest): Promise<RunRecord> => {
      await gate
      return submit(tenant, request)
    }
    try {
      const first = postRun('slow-key')
      await sleep(LEASE_MS * 4)
      expect((await postRun('slow-key')).statusCode).toBe(409)
      release()
      expect((await first).statusCode).toBe(202)
      await sleep(LEASE_MS * 2)
      expect((await postRun('slow-key')).headers['almanac-reused-answer']).toBe('true')
    } finally {
      gateway.submit = submit
    }
  })

  it('a stale owner cannot overwrite or free a key another request now holds', async () => {
    const store = new IdempotencyStore(redis, { prefix, leaseMs: LEASE_MS })
    const stale = (await store.claim('garden', 'taken-key'))!
    await sleep(LEASE_MS * 2)
    const fresh = (await store.claim('garden', 'taken-key'))!
    expect(fresh).not.toBeNull()
    expect(await store.renew('garden', 'taken-key', stale)).toBe(false)
    const answer = { hash: '0'.repeat(64), status: 200, contentType: null, location: null, body: 'stale' }
    expect(await store.complete('garden', 'taken-key', stale, answer)).toBe(false)
    await store.release('garden', 'taken-key', stale)
    expect(await store.get('garden', 'taken-key')).toEqual({ state: 'pending' })
    expect(await store.complete('garden', 'taken-key', fresh, { ...answer, body: 'fresh' })).toBe(true)
    expect(await store.get('garden', 'taken-key')).toMatchObject({ state: 'done', body: 'fresh' })
  })
})

describe('Idempotency-Key and answers that depend on stored state (finding 15)', () => {
  // The real run gateway (without workers): runs over stored histories need it.
  let h: HostileApp
  beforeAll(async () => {
    h = await buildHostileApp('idempotency-state')
  })
  afterAll(() => h?.close())
  // Before the fix the 400 "no stored history" was kept for 24 h: the retry after storing the
  // history got the old 400 again, marked as reused (seen failing).
  it('does not keep a 400 for a SKU without a stored history: the retry after storing it runs', async () => {
    const body = { horizon: 2, frequency: 'month', scope: { skus: ['FIREWOOD-20KG'] } }
    const post = () => h.app.inject({ method: 'POST', url: '/v1/runs', headers: { ...auth(KEY_GARDEN), 'idempotency-key': 'scope-key' }, payload: body })
    const first = await post()
    expect(first.statusCode).toBe(400)
    expect(first.json().errors).toEqual([{ path: 'scope.skus[0]', message: 'no stored history for SKU "FIREWOOD-20KG"' }])
    const put = await h.app.inject({
      method: 'PUT',
      url: '/v1/skus/FIREWOOD-20KG/history',
      headers: auth(KEY_GARDEN),
      payload: { frequency: 'month', firstPeriod: '2025-01', demand: [5, 6, 7, 8] },
    })
    expect(put.statusCode).toBe(201)
    const retry = await post()
    expect(retry.statusCode).toBe(202)
    expect(retry.headers['almanac-reused-answer']).toBeUndefined()
    expect((await post()).headers['almanac-reused-answer']).toBe('true')
  })

  it('still keeps and replays a refusal of the request itself', async () => {
    const bad = { horizon: 0, series: [{ sku: 'X', demand: [1] }] }
    const post = () => h.app.inject({ method: 'POST', url: '/v1/runs', headers: { ...auth(KEY_GARDEN), 'idempotency-key': 'bad-body-key' }, payload: bad })
    expect((await post()).statusCode).toBe(400)
    const again = await post()
    expect(again.statusCode).toBe(400)
    expect(again.headers['almanac-reused-answer']).toBe('true')
  })
})
