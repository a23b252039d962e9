import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Redis } from 'ioredis'
import { KEY_GARDEN, KEY_HEATING, auth } from './gateway-double.js'
import { buildHostileApp, type HostileApp } from './hostile-helpers.js'
import { HistoryStore } from '../../src/storage/histories/history-store.js'

/**
 * Issue 14 finding 9: a quota on the bytes of stored history per tenant (QUOTA_STORED_BYTES_PER_TENANT),
 * small here so the test stays quick. The count is checked against what Redis itself reports
 * (HSTRLEN of every stored field), not against the store's own arithmetic.
 */

const QUOTA = 600
let h: HostileApp
let redis: Redis
let store: HistoryStore

beforeAll(async () => {
  h = await buildHostileApp('bytes-quota', { quotaStoredBytesPerTenant: QUOTA })
  redis = new Redis(h.url)
  store = new HistoryStore(redis, { prefix: h.prefix })
})
afterAll(async () => {
  redis?.disconnect()
  await h?.close()
})

const put = (sku: string, demand: number[], key = KEY_GARDEN) =>
  h.app.inject({ method: 'PUT', url: `/v1/skus/${sku}/history`, headers: auth(key), payload: { frequency: 'month', firstPeriod: '2025-01', demand } })

/** Bytes Redis holds in the tenant's data and meta hashes, field by field. */
async function heldByRedis(tenant: string): Promise<number> {
  const base = `${h.prefix}:t:${tenant}:hist:{${tenant}}`
  let total = 0
  for (const hash of [`${base}:data`, `${base}:meta`]) {
    for (const field of await redis.hkeys(hash)) total += await redis.hstrlen(hash, field)
  }
  return total
}

const REASON = `the tenant's stored histories would exceed ${QUOTA} bytes (QUOTA_STORED_BYTES_PER_TENANT); delete SKUs or raise the quota`

describe('stored bytes per tenant', () => {
  it('refuses a PUT that would grow past the quota with a 409 naming demand, and stores nothing of it', async () => {
    expect((await put('RAKE-1', [1, 2, 3])).statusCode).toBe(201)
    expect(await heldByRedis('garden')).toBeGreaterThan(50)
    expect(await store.storedBytes('garden')).toBe(await heldByRedis('garden'))
    const long = Array.from({ length: 200 }, (_, i) => 100 + i)
    const over = await put('RAKE-2', long)
    expect(over.statusCode).toBe(409)
    expect(over.json()).toMatchObject({ type: 'https://almanac.example/problems/limit-reached', errors: [{ path: 'demand', message: REASON }] })
    expect((await h.app.inject({ url: '/v1/skus/RAKE-2/history', headers: auth(KEY_GARDEN) })).statusCode).toBe(404)
    // Growing a stored SKU past the quota is refused too; the stored history stays as it was.
    expect((await put('RAKE-1', long)).statusCode).toBe(409)
    expect((await h.app.inject({ url: '/v1/skus/RAKE-1/history', headers: auth(KEY_GARDEN) })).json().demand).toEqual([1, 2, 3])
    // Another tenant has its own count.
    expect((await put('STOVE-1', [4, 5])).statusCode).toBe(201)
    expect((await put('STOVE-1', [4, 5], KEY_HEATING)).statusCode).toBe(201)
    expect(await store.storedBytes('garden')).toBe(await heldByRedis('garden'))
    expect(await store.storedBytes('heating')).toBe(await heldByRedis('heating'))
  })

  it('frees the bytes of a deleted history, and refuses new SKUs past the quota in an upload report', async () => {
    const before = await store.storedBytes('garden')
    expect((await h.app.inject({ method: 'DELETE', url: '/v1/skus/STOVE-1/history', headers: auth(KEY_GARDEN) })).statusCode).toBe(204)
    expect(await store.storedBytes('garden')).toBeLessThan(before)
    expect(await store.storedBytes('garden')).toBe(await heldByRedis('garden'))

    const rows = ['sku,period,demand']
    for (let i = 0; i < 12; i++) rows.push(`SHEAR-${i},2025-01,${i + 1}`)
    const res = await h.app.inject({
      method: 'POST',
      url: '/v1/history',
      headers: { ...auth(KEY_GARDEN), 'content-type': 'text/csv' },
      payload: rows.join('\n') + '\n',
    })
    expect(res.statusCode).toBe(200)
    const report = res.json()
    expect(report.skus.created).toBeGreaterThan(0)
    expect(report.skus.rejected).toBeGreaterThan(0)
    expect(report.skus.created + report.skus.rejected).toBe(12)
    expect(report.errors.every((e: { reason: string }) => e.reason === REASON)).toBe(true)
    const held = await heldByRedis('garden')
    expect(held).toBeLessThanOrEqual(QUOTA)
    expect(await store.storedBytes('garden')).toBe(held)
  })
})
