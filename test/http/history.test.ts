import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { KEY_GARDEN, KEY_HEATING, auth } from './gateway-double.js'
import { buildHistoryApp, type HistoryApp } from './history-helpers.js'

let h: HistoryApp
beforeAll(async () => {
  h = await buildHistoryApp('http-history')
})
afterAll(() => h?.close())

describe('PUT and GET /v1/skus/{sku}/history', () => {
  it('creates (201), replaces (200) and reads a history; another tenant sees nothing', async () => {
    const put = await h.app.inject({
      method: 'PUT',
      url: '/v1/skus/HOSE-25M/history',
      headers: auth(KEY_GARDEN),
      payload: { frequency: 'month', firstPeriod: '2025-11', demand: [4, null, 6], tags: ['site:north', 'category:garden', 'site:north'] },
    })
    expect(put.statusCode).toBe(201)
    expect(put.json()).toMatchObject({
      sku: 'HOSE-25M',
      frequency: 'month',
      firstPeriod: '2025-11',
      lastPeriod: '2026-01',
      periodCount: 3,
      demand: [4, null, 6],
      tags: ['category:garden', 'site:north'],
    })
    const again = await h.app.inject({
      method: 'PUT',
      url: '/v1/skus/HOSE-25M/history',
      headers: auth(KEY_GARDEN),
      payload: { frequency: 'month', firstPeriod: '2025-12', demand: [7, 8] },
    })
    expect(again.statusCode).toBe(200)
    const get = await h.app.inject({ url: '/v1/skus/HOSE-25M/history', headers: auth(KEY_GARDEN) })
    expect(get.statusCode).toBe(200)
    expect(get.json()).toMatchObject({ firstPeriod: '2025-12', demand: [7, 8], tags: [], lastPeriod: '2026-01' })
    const other = await h.app.inject({ url: '/v1/skus/HOSE-25M/history', headers: auth(KEY_HEATING) })
    expect(other.statusCode).toBe(404)
  })

  it('stores a weekly history given from a calendar date under its ISO week', async () => {
    const put = await h.app.inject({
      method: 'PUT',
      url: '/v1/skus/GLOVES-W/history',
      headers: auth(KEY_GARDEN),
      payload: { frequency: 'week', firstPeriod: '2024-03-05', demand: [3, 4] },
    })
    expect(put.statusCode).toBe(201)
    expect(put.json()).toMatchObject({ firstPeriod: '2024-W10', lastPeriod: '2024-W11', periodCount: 2 })
  })

  it('refuses a firstPeriod of another frequency and a bad tag with the field', async () => {
    const bad = await h.app.inject({
      method: 'PUT',
      url: '/v1/skus/RAKE/history',
      headers: auth(KEY_GARDEN),
      payload: { frequency: 'week', firstPeriod: '2025-11', demand: [1] },
    })
    expect(bad.statusCode).toBe(400)
    expect(bad.json().errors[0].path).toBe('firstPeriod')
    const tag = await h.app.inject({
      method: 'PUT',
      url: '/v1/skus/RAKE/history',
      headers: auth(KEY_GARDEN),
      payload: { frequency: 'month', firstPeriod: '2025-11', demand: [1], tags: ['no spaces'] },
    })
    expect(tag.statusCode).toBe(400)
    expect(tag.json().errors[0].path).toBe('tags[0]')
  })
})
