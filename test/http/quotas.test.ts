import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { KEY_GARDEN, KEY_HEATING, auth } from './gateway-double.js'
import { buildHostileApp, type HostileApp } from './hostile-helpers.js'

/** Issue 14 finding 9: per-tenant quotas, small here so the test stays quick. Before the fix none existed (seen failing). */

let h: HostileApp
beforeAll(async () => {
  h = await buildHostileApp('quotas', { quotaSkusPerTenant: 5, scheduleMaxSkus: 3 })
})
afterAll(() => h?.close())

const put = (sku: string, key = KEY_GARDEN) =>
  h.app.inject({ method: 'PUT', url: `/v1/skus/${sku}/history`, headers: auth(key), payload: { frequency: 'month', firstPeriod: '2025-01', demand: [1, 2] } })
const QUOTA = 'the tenant holds 5 SKUs and may hold at most 5 (QUOTA_SKUS_PER_TENANT); delete SKUs or raise the quota'

describe('SKUs per tenant', () => {
  it('a PUT of a new SKU past the quota is a 409 naming sku; updates and other tenants go on', async () => {
    for (let i = 1; i <= 5; i++) expect((await put(`BULB-${i}`)).statusCode).toBe(201)
    const over = await put('BULB-6')
    expect(over.statusCode).toBe(409)
    expect(over.json()).toMatchObject({ type: 'https://almanac.example/problems/limit-reached', errors: [{ path: 'sku', message: QUOTA }] })
    expect((await put('BULB-1')).statusCode).toBe(200)
    expect((await put('BULB-6', KEY_HEATING)).statusCode).toBe(201)
  })

  it('an upload updates stored SKUs and refuses each new one past the quota in its report', async () => {
    const res = await h.app.inject({
      method: 'POST',
      url: '/v1/history',
      headers: { ...auth(KEY_GARDEN), 'content-type': 'text/csv' },
      payload: 'sku,period,demand\nBULB-2,2025-03,9\nBULB-7,2025-03,1\nBULB-7,2025-04,1\nBULB-3,2025-03,9\n',
    })
    expect(res.statusCode).toBe(200)
    expect(res.json()).toMatchObject({
      rows: { accepted: 2, rejected: 2 },
      skus: { created: 0, updated: 2, rejected: 1 },
      errors: [{ line: 3, sku: 'BULB-7', reason: QUOTA }],
    })
    const stored = await h.app.inject({ url: '/v1/skus?limit=100', headers: auth(KEY_GARDEN) })
    expect(stored.json().items.map((s: { sku: string }) => s.sku)).toEqual(['BULB-1', 'BULB-2', 'BULB-3', 'BULB-4', 'BULB-5'])
  })
})

describe('schedule selection size', () => {
  it('a schedule naming more SKUs than SCHEDULE_MAX_SKUS is a 400 naming scope.skus', async () => {
    const res = await h.app.inject({
      method: 'POST',
      url: '/v1/schedules',
      headers: auth(KEY_GARDEN),
      payload: { cron: '0 6 * * 1', timeZone: 'Europe/Berlin', horizon: 2, scope: { skus: ['BULB-1', 'BULB-2', 'BULB-3', 'BULB-4'] } },
    })
    expect(res.statusCode).toBe(400)
    expect(res.json().errors).toEqual([
      { path: 'scope.skus', message: 'a schedule names at most 3 SKUs (SCHEDULE_MAX_SKUS), this one 4; select by tags or all instead' },
    ])
  })
})
