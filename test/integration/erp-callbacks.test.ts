import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Redis } from 'ioredis'
import { createLogger } from '../../src/logger.js'
import { createRunGateway, type RunMachinery } from '../../src/queue/gateway.js'
import { startProcessWorkers, type ProcessWorkers } from '../../src/worker-main.js'
import { DeliveryStore, type Delivery } from '../../src/storage/erp/delivery-store.js'
import { runKeys } from '../../src/storage/keys.js'
import { CallbackStore } from '../../src/storage/erp/callback-store.js'
import { verifySignature } from '../../src/callbacks/signing.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../helpers/redis.js'
import { runRequest, runsTestConfig, syntheticSeries, waitFor } from '../queue/fixtures.js'
import { deadUrl, startReceiver } from '../callbacks/receiver.js'

// Callbacks end to end: real gateway, chunk and callback workers, Redis, and a receiver on 127.0.0.1.
let url: string
let prefix: string
let gateway: RunMachinery
let workers: ProcessWorkers
let redis: Redis
let deliveries: DeliveryStore
let callbacks: CallbackStore
let receiver: Awaited<ReturnType<typeof startReceiver>>
let secret: string

const ATTEMPTS = 4

beforeAll(async () => {
  url = await redisUrlForTests()
  prefix = uniquePrefix('erp-callbacks')
  const config = runsTestConfig(url, prefix, { callbackAttempts: ATTEMPTS, callbackBackoffMs: 50, callbackTimeoutMs: 2000, callbackAllowPrivateNetworks: true })
  gateway = createRunGateway(config, { logger: createLogger({ level: 'silent' }) })
  workers = startProcessWorkers(config, createLogger({ level: 'silent' }))
  redis = new Redis(url)
  deliveries = new DeliveryStore(redis, { prefix, ttlSeconds: 3600 })
  callbacks = new CallbackStore(redis, prefix)
  secret = await callbacks.rotateSecret('garden')
  // /twice fails the first attempt of each delivery (by its id), so every delivery is retried once.
  const seen = new Set<string>()
  receiver = await startReceiver((r, nth) => {
    if (r.path === '/twice') {
      const id = String(r.headers['almanac-delivery'])
      if (seen.has(id)) return 200
      seen.add(id)
      return 503
    }
    return r.path === '/flaky' && nth <= 2 ? 500 : r.path === '/moved' ? 302 : 200
  })
})

afterAll(async () => {
  await workers?.close()
  await gateway?.close()
  await receiver?.close()
  redis?.disconnect()
  if (url && prefix) await deleteKeys(url, prefix)
})

const settled = (tenant: string, runId: string, n = 1) =>
  waitFor(async () => {
    const list = await deliveries.all(tenant, runId)
    return list.length >= n && list.every((d) => d.status === 'delivered' || d.status === 'dead') ? list : undefined
  }, 60_000, `deliveries of ${runId}`)

describe('run callbacks', { timeout: 120_000 }, () => {
  it('delivers a signed run.succeeded event the receiver can verify', async () => {
    const run = await gateway.submit('garden', runRequest(syntheticSeries(3), { callbackUrl: `${receiver.url}/ok` }))
    const [d] = (await settled('garden', run.id)) as [Delivery]
    expect(d).toMatchObject({ status: 'delivered', event: 'run.succeeded', source: 'run', url: `${receiver.url}/ok` })
    expect(d.attempts).toHaveLength(1)
    expect(d.attempts[0]).toMatchObject({ attempt: 1, httpStatus: 200, failure: null })

    const got = receiver.received.filter((r) => r.path === '/ok')
    expect(got).toHaveLength(1)
    const req = got[0]!
    const body = JSON.parse(req.body)
    expect(body).toMatchObject({ type: 'run.succeeded', run: { id: run.id, status: 'succeeded', progress: { total: 3, done: 3 } } })
    expect(body.run).not.toHaveProperty('settings')
    expect(req.headers['almanac-event']).toBe('run.succeeded')
    expect(req.headers['almanac-delivery']).toBe(d.id)
    expect(req.headers['almanac-signature']).toMatch(/^hmac-sha256=[0-9a-f]{64}$/)
    const headers = {
      signature: req.headers['almanac-signature'] as string,
      delivery: req.headers['almanac-delivery'] as string,
      sentAt: req.headers['almanac-sent-at'] as string,
    }
    const now = Math.floor(Date.now() / 1000)
    expect(verifySignature(secret, headers, req.body, now)).toBe(true)
    // A tampered body, another secret or a stale timestamp fail verification.
    expect(verifySignature(secret, headers, req.body.replace('succeeded', 'failed'), now)).toBe(false)
    expect(verifySignature('0'.repeat(64), headers, req.body, now)).toBe(false)
    expect(verifySignature(secret, headers, req.body, now + 301)).toBe(false)
  })

  it('retries a receiver that fails twice: three attempts logged, delivered', async () => {
    const run = await gateway.submit('garden', runRequest(syntheticSeries(2), { callbackUrl: `${receiver.url}/flaky` }))
    const [d] = (await settled('garden', run.id)) as [Delivery]
    expect(d.status).toBe('delivered')
    const failed = { code: 'receiver-status', message: 'HTTP 500' }
    expect(d.attempts.map((a) => [a.attempt, a.httpStatus, a.failure])).toEqual([
      [1, 500, failed],
      [2, 500, failed],
      [3, 200, null],
    ])
    // Every retry of the delivery carried its id.
    const sent = receiver.received.filter((r) => r.path === '/flaky')
    expect(sent.map((r) => r.headers['almanac-delivery'])).toEqual([d.id, d.id, d.id])
    // Exponential backoff: the second wait (100 ms) is at least the first (50 ms).
    const t = d.attempts.map((a) => Date.parse(a.at))
    expect(t[1]! - t[0]!).toBeGreaterThanOrEqual(40)
    expect(t[2]! - t[1]!).toBeGreaterThanOrEqual(90)
  })

  it('gives up on a receiver that is down: dead after the last attempt', async () => {
    const down = await deadUrl()
    const run = await gateway.submit('garden', runRequest(syntheticSeries(2), { callbackUrl: `${down}/hook` }))
    const [d] = (await settled('garden', run.id)) as [Delivery]
    expect(d.status).toBe('dead')
    expect(d.attempts).toHaveLength(ATTEMPTS)
    for (const a of d.attempts) {
      expect(a.httpStatus).toBeNull()
      expect(a.failure).toEqual({ code: 'network-error', message: 'ECONNREFUSED' })
    }
  })

  it('does not follow redirects: a 302 is a failed attempt', async () => {
    const run = await gateway.submit('garden', runRequest(syntheticSeries(1), { callbackUrl: `${receiver.url}/moved` }))
    const [d] = (await settled('garden', run.id)) as [Delivery]
    expect(d.status).toBe('dead')
    expect(d.attempts[0]).toMatchObject({ httpStatus: 302, failure: { code: 'receiver-status', message: 'HTTP 302' } })
  })

  it('calls standing callbacks subscribed to the event (run.cancelled), not others', async () => {
    await callbacks.add('garden', `${receiver.url}/cancelled`, ['run.cancelled'], new Date())
    await callbacks.add('garden', `${receiver.url}/failed-only`, ['run.failed'], new Date())
    const run = await gateway.submit('garden', runRequest(syntheticSeries(400)))
    await gateway.cancel('garden', run.id)
    const list = await settled('garden', run.id)
    expect(list.map((d) => [d.url, d.event, d.source, d.status])).toEqual([
      [`${receiver.url}/cancelled`, 'run.cancelled', 'standing', 'delivered'],
    ])
    expect(receiver.received.filter((r) => r.path === '/failed-only')).toHaveLength(0)
  })

  it('announces a failed run (run.failed) to its callbackUrl', async () => {
    // 400 series in chunks of 10: the last chunk's input is deleted long before a worker reaches it,
    // so that chunk fails for good and fails the run.
    const run = await gateway.submit('garden', runRequest(syntheticSeries(400), { callbackUrl: `${receiver.url}/failed` }))
    await redis.del(runKeys(prefix, 'garden', run.id).input(39))
    const [d] = (await settled('garden', run.id)) as [Delivery]
    expect(d).toMatchObject({ event: 'run.failed', status: 'delivered' })
    const body = JSON.parse(receiver.received.find((r) => r.path === '/failed')!.body)
    expect(body).toMatchObject({
      type: 'run.failed',
      run: { id: run.id, status: 'failed', failure: { code: 'chunk-failed', message: 'chunk 39 failed: input of chunk 39 is missing (expired?)' } },
    })
  })

  it('keeps tenants apart: another tenant sees no deliveries', async () => {
    const run = await gateway.submit('garden', runRequest(syntheticSeries(1), { callbackUrl: `${receiver.url}/ok` }))
    const own = await settled('garden', run.id)
    // The standing callbacks listen to run.cancelled and run.failed only: one delivery, the run's own.
    expect(own.map((d) => d.source)).toEqual(['run'])
    expect(await deliveries.all('heating', run.id)).toEqual([])
  })

  it('gives two runs called back at one URL different delivery ids; each keeps its id across retries', async () => {
    const a = await gateway.submit('garden', runRequest(syntheticSeries(1), { callbackUrl: `${receiver.url}/twice` }))
    const b = await gateway.submit('garden', runRequest(syntheticSeries(1), { callbackUrl: `${receiver.url}/twice` }))
    const [da] = (await settled('garden', a.id)) as [Delivery]
    const [db] = (await settled('garden', b.id)) as [Delivery]
    expect(da.id).not.toBe(db.id)
    // The receiver fails each delivery's first attempt; the retry carries the same id.
    const ids = receiver.received.filter((r) => r.path === '/twice').map((r) => r.headers['almanac-delivery'])
    expect(ids.filter((id) => id === da.id)).toHaveLength(2)
    expect(ids.filter((id) => id === db.id)).toHaveLength(2)
    expect(da.attempts.map((x) => x.httpStatus)).toEqual([503, 200])
  })
})
