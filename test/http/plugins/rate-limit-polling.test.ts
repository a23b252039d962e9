import { afterEach, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import { build } from '../../../src/http/app.js'
import { DEFAULT_RATE_LIMIT_MAX } from '../../../src/config.js'
import { InMemoryGatewayDouble, KEY_GARDEN, auth, testConfig } from '../gateway-double.js'

// Issue 13: "20 runs polled four times a second hit 429 within 8 seconds and waited
// out the minute." The polls are replayed with app.inject, as fast as they go: the
// limit counts requests per window, not their timing, so a simulated minute is one window.
const RUNS = 20
const POLLS_PER_SECOND = 4
const SECONDS = 60

let app: FastifyInstance | undefined
afterEach(async () => {
  await app?.close()
  app = undefined
})

/** A run through the API (one request counted). */
async function submit(on: FastifyInstance, sku: string): Promise<{ id: string }> {
  const res = await on.inject({ method: 'POST', url: '/v1/runs', headers: auth(KEY_GARDEN), payload: { horizon: 1, series: [{ sku, demand: [1, 2, 3] }] } })
  expect(res.statusCode).toBe(202)
  return res.json()
}

async function dashboard(rateLimitMax: number, opts: { runsMoveEachSecond: boolean }) {
  const gateway = new InMemoryGatewayDouble()
  app = await build({ config: testConfig({ rateLimitMax, rateLimitWindowMs: 60_000 }), gateway })
  const ids: string[] = []
  for (let i = 0; i < RUNS; i++) {
    ids.push((await submit(app, `HOSE-${i}`)).id)
  }
  const tags = new Map<string, string>()
  const codes = new Map<number, number>()
  for (let second = 0; second < SECONDS; second++) {
    if (opts.runsMoveEachSecond) {
      for (const id of ids) {
        const run = gateway.runs.get(id)!
        gateway.runs.set(id, { ...run, status: 'running', progress: { ...run.progress, done: second } })
      }
    }
    for (let poll = 0; poll < POLLS_PER_SECOND; poll++) {
      for (const id of ids) {
        const tag = tags.get(id)
        const res = await app.inject({ url: `/v1/runs/${id}`, headers: { ...auth(KEY_GARDEN), ...(tag ? { 'if-none-match': tag } : {}) } })
        codes.set(res.statusCode, (codes.get(res.statusCode) ?? 0) + 1)
        if (res.statusCode === 200) tags.set(id, res.headers.etag as string)
      }
    }
  }
  return Object.fromEntries(codes)
}

describe('polling and the rate limit', () => {
  it("fits the issue's dashboard under the default budget: 20 runs, 4 polls a second, a minute, If-None-Match", async () => {
    expect(await dashboard(DEFAULT_RATE_LIMIT_MAX, { runsMoveEachSecond: false })).toEqual({ 200: RUNS, 304: RUNS * (POLLS_PER_SECOND * SECONDS - 1) })
  })

  it('does not count 304s: the same polls fit even the old budget of 600 a minute', async () => {
    expect(await dashboard(600, { runsMoveEachSecond: false })).toEqual({ 200: RUNS, 304: RUNS * (POLLS_PER_SECOND * SECONDS - 1) })
  })

  it('fits the default budget when every run moves each second (one 200 and three 304s per run and second)', async () => {
    expect(await dashboard(DEFAULT_RATE_LIMIT_MAX, { runsMoveEachSecond: true })).toEqual({
      200: RUNS * SECONDS,
      304: RUNS * SECONDS * (POLLS_PER_SECOND - 1),
    })
  })

  it('still counts answers that are not 304, so a tenant over budget gets 429', async () => {
    const gateway = new InMemoryGatewayDouble()
    app = await build({ config: testConfig({ rateLimitMax: 4, rateLimitWindowMs: 60_000 }), gateway })
    const run = await submit(app, 'RAKE')
    const first = await app.inject({ url: `/v1/runs/${run.id}`, headers: auth(KEY_GARDEN) })
    expect(first.statusCode).toBe(200)
    for (let i = 0; i < 10; i++) {
      const poll = await app.inject({ url: `/v1/runs/${run.id}`, headers: { ...auth(KEY_GARDEN), 'if-none-match': first.headers.etag as string } })
      expect(poll.statusCode).toBe(304)
    }
    // Budget 4: the POST, the first 200 and two more; the 304s between them were refunded.
    const codes: number[] = []
    for (let i = 0; i < 3; i++) codes.push((await app.inject({ url: `/v1/runs/${run.id}`, headers: auth(KEY_GARDEN) })).statusCode)
    expect(codes).toEqual([200, 200, 429])
  })

  it('does not count the API docs page and its files', async () => {
    app = await build({ config: testConfig({ rateLimitMax: 1, rateLimitWindowMs: 60_000 }), gateway: new InMemoryGatewayDouble() })
    for (const url of ['/docs', '/docs/static/index.html', '/docs/static/swagger-ui.css', '/docs/json', '/docs', '/docs/static/swagger-ui-bundle.js']) {
      const res = await app.inject({ url })
      expect(res.statusCode, url).not.toBe(429)
      expect(res.statusCode, url).toBeLessThan(400)
    }
  })
})
