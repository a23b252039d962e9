import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import type { RunMachinery } from '../../src/queue/gateway.js'
import { verifySignature } from '../../src/callbacks/signing.js'
import { startService, type TestService } from '../helpers/service.js'
import { syntheticSeries, waitFor } from '../queue/fixtures.js'
import { startReceiver, type Received } from '../callbacks/receiver.js'

// /v1/callbacks and /v1/runs/{id}/deliveries through the real app, queue and workers.
let service: TestService
let app: FastifyInstance
let gateway: RunMachinery
let receiver: Awaited<ReturnType<typeof startReceiver>>

beforeAll(async () => {
  service = await startService('erp-callbacks-http', {
    config: { callbackAttempts: 2, callbackBackoffMs: 20, callbackAllowPrivateNetworks: true },
    erp: true,
  })
  ;({ app, gateway } = service)
  receiver = await startReceiver(() => 204)
})

afterAll(async () => {
  await service?.close()
  await receiver?.close()
})

/** The signature headers of a received delivery, as verifySignature takes them. */
const signed = (r: Received) => ({
  signature: r.headers['almanac-signature'] as string,
  delivery: r.headers['almanac-delivery'] as string,
  sentAt: r.headers['almanac-sent-at'] as string,
})

describe('callbacks and deliveries over HTTP', { timeout: 120_000 }, () => {
  let secret: string
  let callbackId: string

  it('registers a standing callback; the first one returns the signing secret once', async () => {
    const first = await app.inject({
      method: 'POST',
      url: '/v1/callbacks',
      payload: { url: `${receiver.url}/standing`, events: ['run.succeeded', 'run.failed'] },
    })
    expect(first.statusCode).toBe(201)
    expect(first.json().secret).toMatch(/^[0-9a-f]{64}$/)
    secret = first.json().secret
    callbackId = first.json().id
    expect(first.headers.location).toBe(`/v1/callbacks/${callbackId}`)
    const second = await app.inject({ method: 'POST', url: '/v1/callbacks', payload: { url: `${receiver.url}/other`, events: ['run.cancelled'] } })
    expect(second.json()).not.toHaveProperty('secret')
    const list = (await app.inject({ url: '/v1/callbacks' })).json()
    expect(list.items.map((c: { url: string }) => c.url)).toEqual([`${receiver.url}/standing`, `${receiver.url}/other`])
    expect(list.nextCursor).toBeNull()
    // Paged like every list; a cursor this API did not issue is a 400 naming it.
    const page1 = (await app.inject({ url: '/v1/callbacks?limit=1' })).json()
    expect(page1.items).toHaveLength(1)
    const page2 = (await app.inject({ url: `/v1/callbacks?limit=1&cursor=${page1.nextCursor}` })).json()
    expect(page2).toMatchObject({ items: [{ url: `${receiver.url}/other` }], nextCursor: null })
    const bad = await app.inject({ url: '/v1/callbacks?cursor=abc' })
    expect(bad.statusCode).toBe(400)
    expect(bad.json().errors[0].path).toBe('cursor')
    expect((await app.inject({ method: 'DELETE', url: `/v1/callbacks/${second.json().id}` })).statusCode).toBe(204)
    expect((await app.inject({ url: `/v1/callbacks/${second.json().id}` })).statusCode).toBe(404)
  })

  it('refuses URLs that are not http(s) or carry credentials, and unknown events', async () => {
    const res = await app.inject({
      method: 'POST',
      url: '/v1/callbacks',
      payload: { url: 'ftp://example.org/hook', events: ['run.finished'] },
    })
    expect(res.statusCode).toBe(400)
    expect(res.json().errors.map((e: { path: string }) => e.path).sort()).toEqual(['events[0]', 'url'])
    const creds = await app.inject({ method: 'POST', url: '/v1/callbacks', payload: { url: 'https://u:p@example.org/', events: ['run.failed'] } })
    expect(creds.json().errors).toEqual([{ path: 'url', message: 'must not contain credentials' }])
    const run = await app.inject({ method: 'POST', url: '/v1/runs', payload: { horizon: 2, series: syntheticSeries(1), callbackUrl: 'file:///etc/passwd' } })
    expect(run.statusCode).toBe(400)
    expect(run.json().errors[0].path).toBe('callbackUrl')
  })

  it('logs the deliveries of a run: its own callbackUrl and the standing callback, both signed', async () => {
    const res = await app.inject({
      method: 'POST',
      url: '/v1/runs',
      payload: { horizon: 3, series: syntheticSeries(2), callbackUrl: `${receiver.url}/run` },
    })
    const runId = res.json().id as string
    const log = await waitFor(async () => {
      const body = (await app.inject({ url: `/v1/runs/${runId}/deliveries` })).json()
      return body.items.length === 2 && body.items.every((d: { status: string }) => d.status === 'delivered') ? body : undefined
    }, 60_000, 'both deliveries')
    expect(log.items.map((d: { source: string; url: string }) => [d.source, d.url]).sort()).toEqual([
      ['run', `${receiver.url}/run`],
      ['standing', `${receiver.url}/standing`],
    ])
    for (const d of log.items) expect(d.attempts).toEqual([expect.objectContaining({ attempt: 1, httpStatus: 204, failure: null })])
    const now = Math.floor(Date.now() / 1000)
    for (const path of ['/run', '/standing']) {
      const r = receiver.received.find((x) => x.path === path)!
      expect(verifySignature(secret, signed(r), r.body, now)).toBe(true)
    }
  })

  it('after a rotation deliveries are signed with the new secret and, for a day, the old one too', async () => {
    const rotated = (await app.inject({ method: 'POST', url: '/v1/callbacks/secret' })).json().secret as string
    expect(rotated).not.toBe(secret)
    const res = await app.inject({ method: 'POST', url: '/v1/runs', payload: { horizon: 3, series: syntheticSeries(1) } })
    const runId = res.json().id as string
    await waitFor(async () => {
      const body = (await app.inject({ url: `/v1/runs/${runId}/deliveries` })).json()
      return body.items[0]?.status === 'delivered' ? body : undefined
    }, 60_000, 'the delivery')
    const r = receiver.received.filter((x) => x.path === '/standing').at(-1)!
    expect(JSON.parse(r.body).run.id).toBe(runId)
    const now = Math.floor(Date.now() / 1000)
    expect((r.headers['almanac-signature'] as string).split(',')).toHaveLength(2)
    expect(verifySignature(rotated, signed(r), r.body, now)).toBe(true)
    expect(verifySignature(secret, signed(r), r.body, now)).toBe(true)
    expect(verifySignature('0'.repeat(64), signed(r), r.body, now)).toBe(false)
  })

  it('404 for an unknown run; an empty log for a run without callbacks of its event', async () => {
    expect((await app.inject({ url: '/v1/runs/no-such-run/deliveries' })).statusCode).toBe(404)
    await app.inject({ method: 'DELETE', url: `/v1/callbacks/${callbackId}` })
    const res = await app.inject({ method: 'POST', url: '/v1/runs', payload: { horizon: 3, series: syntheticSeries(1) } })
    const runId = res.json().id as string
    await waitFor(async () => ((await gateway.get('default', runId))?.status === 'succeeded' ? true : undefined), 60_000, 'the run')
    expect((await app.inject({ url: `/v1/runs/${runId}/deliveries` })).json()).toEqual({ items: [], nextCursor: null })
  })
})
