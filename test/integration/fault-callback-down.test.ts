import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import { startService, type TestService } from '../helpers/service.js'
import { syntheticSeries, waitFor } from '../queue/fixtures.js'
import { deadUrl } from '../callbacks/receiver.js'

/**
 * A callback receiver that is down for good, seen through the API: the run
 * still succeeds, the delivery is retried with growing pauses and ends dead,
 * and GET /v1/runs/{id}/deliveries shows every attempt and why it failed.
 * (test/integration/erp-callbacks.test.ts covers the same at the store level,
 * plus flaky receivers and redirects.)
 */

const ATTEMPTS = 3
const BACKOFF_MS = 200
let service: TestService
let app: FastifyInstance

beforeAll(async () => {
  service = await startService('fault-callback-down', {
    config: {
      callbackAttempts: ATTEMPTS,
      callbackBackoffMs: BACKOFF_MS,
      callbackTimeoutMs: 2000,
      callbackAllowPrivateNetworks: true,
    },
    erp: true,
  })
  ;({ app } = service)
})

afterAll(() => service?.close())

describe('callback receiver down', { timeout: 60_000 }, () => {
  it('retries with backoff, ends dead, and the API shows each attempt; the run is unaffected', async () => {
    const down = await deadUrl()
    const submitted = await app.inject({
      method: 'POST',
      url: '/v1/runs',
      payload: { horizon: 3, callbackUrl: `${down}/almanac-hook`, series: syntheticSeries(3) },
    })
    expect(submitted.statusCode).toBe(202)
    const runId = submitted.json().id as string

    const delivery = await waitFor(async () => {
      const res = await app.inject({ url: `/v1/runs/${runId}/deliveries` })
      const d = res.json().items?.[0]
      return d && d.status === 'dead' ? d : undefined
    }, 45_000, 'the delivery to end dead')

    expect(delivery).toMatchObject({ url: `${down}/almanac-hook`, event: 'run.succeeded', source: 'run', maxAttempts: ATTEMPTS })
    expect(delivery.attempts.map((a: { attempt: number }) => a.attempt)).toEqual([1, 2, 3])
    for (const a of delivery.attempts) {
      expect(a.httpStatus).toBeNull()
      expect(a.failure).toEqual({ code: 'network-error', message: 'ECONNREFUSED' })
    }
    // Backoff doubles from CALLBACK_BACKOFF_MS: at least 200 ms, then 400 ms between attempts.
    const at = delivery.attempts.map((a: { at: string }) => Date.parse(a.at))
    expect(at[1] - at[0]).toBeGreaterThanOrEqual(BACKOFF_MS - 20)
    expect(at[2] - at[1]).toBeGreaterThanOrEqual(2 * BACKOFF_MS - 20)

    const run = (await app.inject({ url: `/v1/runs/${runId}` })).json()
    expect(run.status).toBe('succeeded')
    expect(run.progress).toEqual({ total: 3, done: 3, failed: 0 })
  })
})
