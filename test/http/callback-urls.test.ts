import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { KEY_GARDEN, auth } from './gateway-double.js'
import { buildHostileApp, type HostileApp } from './hostile-helpers.js'

/** Issue 14 finding 14: callback URLs are checked when they are registered, not only at delivery. */

let h: HostileApp
beforeAll(async () => {
  h = await buildHostileApp('callback-urls')
})
afterAll(() => h?.close())

const post = (url: string, payload: object) => h.app.inject({ method: 'POST', url, headers: auth(KEY_GARDEN), payload })
const REFUSED = '::7f00:1 is not a public address; callbacks call only public addresses unless CALLBACK_ALLOW_PRIVATE_NETWORKS=true'

describe('callback URLs at registration', () => {
  // Before the fix all three were accepted and failed only at delivery, five times (seen failing).
  it('a standing callback, a run and a schedule with a private address are each a 400 naming the field', async () => {
    const cb = await post('/v1/callbacks', { url: 'http://[::127.0.0.1]/hook', events: ['run.succeeded'] })
    expect(cb.statusCode).toBe(400)
    expect(cb.json().errors).toEqual([{ path: 'url', message: REFUSED }])
    const run = await post('/v1/runs', { horizon: 2, callbackUrl: 'http://[::127.0.0.1]/hook', series: [{ sku: 'SEED-TRAY', demand: [1, 2, 3] }] })
    expect(run.statusCode).toBe(400)
    expect(run.json().errors).toEqual([{ path: 'callbackUrl', message: REFUSED }])
    const schedule = await post('/v1/schedules', { cron: '0 6 * * 1', timeZone: 'Europe/Berlin', horizon: 2, callbackUrl: 'http://[::127.0.0.1]/hook', scope: { all: true } })
    expect(schedule.statusCode).toBe(400)
    expect(schedule.json().errors).toEqual([{ path: 'callbackUrl', message: REFUSED }])
  })

  it('accepts a public name (checked again at each delivery)', async () => {
    const cb = await post('/v1/callbacks', { url: 'https://erp.example/hooks/almanac', events: ['run.succeeded'] })
    expect(cb.statusCode).toBe(201)
  })
})
