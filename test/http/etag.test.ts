import { createHash } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { noneMatch } from '../../src/http/plugins/etag.js'
import { KEY_GARDEN, auth, forecastItemFixture } from './gateway-double.js'
import { buildHistoryApp, type HistoryApp } from './history-helpers.js'

let h: HistoryApp
beforeAll(async () => {
  h = await buildHistoryApp('http-etag')
})
afterAll(() => h?.close())

const get = (url: string, ifNoneMatch?: string) =>
  h.app.inject({ url, headers: { ...auth(KEY_GARDEN), ...(ifNoneMatch ? { 'if-none-match': ifNoneMatch } : {}) } })

describe('ETag and If-None-Match', () => {
  it('GET /v1/runs/{id}: strong ETag of the body; 304 with an empty body while unchanged; a new tag after a change', async () => {
    const run = await h.app.inject({
      method: 'POST',
      url: '/v1/runs',
      headers: auth(KEY_GARDEN),
      payload: { horizon: 1, series: [{ sku: 'HOSE-25M', demand: [1, 2, 3] }] },
    })
    const url = `/v1/runs/${run.json().id}`
    const first = await get(url)
    const etag = first.headers.etag as string
    expect(etag).toBe(`"${createHash('sha256').update(first.body).digest('base64url')}"`)
    const cached = await get(url, etag)
    expect(cached.statusCode).toBe(304)
    expect(cached.body).toBe('')
    expect((await get(url, `"other", W/${etag}`)).statusCode).toBe(304)
    h.gateway.complete(run.json().id, [forecastItemFixture('HOSE-25M')])
    const changed = await get(url, etag)
    expect(changed.statusCode).toBe(200)
    expect(changed.headers.etag).not.toBe(etag)
    expect(changed.json().status).toBe('succeeded')
  })

  it('GET /v1/skus/{sku}/forecast and /history carry ETags too; errors do not', async () => {
    const forecast = await get('/v1/skus/HOSE-25M/forecast')
    expect(forecast.statusCode).toBe(200)
    expect((await get('/v1/skus/HOSE-25M/forecast', forecast.headers.etag as string)).statusCode).toBe(304)
    await h.app.inject({
      method: 'PUT',
      url: '/v1/skus/HOSE-25M/history',
      headers: auth(KEY_GARDEN),
      payload: { frequency: 'month', firstPeriod: '2025-01', demand: [1] },
    })
    const history = await get('/v1/skus/HOSE-25M/history')
    expect((await get('/v1/skus/HOSE-25M/history', history.headers.etag as string)).statusCode).toBe(304)
    const missing = await get('/v1/skus/NOPE/forecast')
    expect(missing.statusCode).toBe(404)
    expect(missing.headers.etag).toBeUndefined()
  })

  it('noneMatch compares weakly and accepts *', () => {
    expect(noneMatch('*', '"a"')).toBe(true)
    expect(noneMatch('W/"a"', '"a"')).toBe(true)
    expect(noneMatch('"b", "a"', '"a"')).toBe(true)
    expect(noneMatch('"b"', '"a"')).toBe(false)
    expect(noneMatch(undefined, '"a"')).toBe(false)
  })
})
