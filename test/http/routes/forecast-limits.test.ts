import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import { build } from '../../../src/http/app.js'
import { createSyncFitPool, type SyncFitter } from '../../../src/http/sync-fits/pool.js'
import { InMemoryGatewayDouble, KEY_GARDEN, auth, testConfig } from '../gateway-double.js'
import { MODEL_REGISTRY } from '../../../src/engine/index.js'

// Issue 14, finding 2: POST /v1/forecast fitted on the event loop with no cost limit
// (10,000 daily points, season 366, 12 origins took 63 s and health probes timed out).
// Demand values are invented (service behaviour, no forecast numbers judged).
const daily = (n: number) => Array.from({ length: n }, (_, i) => 50 + 20 * Math.sin((2 * Math.PI * i) / 366) + ((i * 7919) % 13))

describe('POST /v1/forecast: bounded work, off the event loop', () => {
  describe('cost limit', () => {
    let app: FastifyInstance
    beforeAll(async () => {
      app = await build({ config: testConfig(), gateway: new InMemoryGatewayDouble() })
    })
    afterAll(() => app.close())

    it('refuses the finding 2 request with 413 naming the limit (seen failing before the fix: it fitted for a minute)', async () => {
      const res = await app.inject({
        method: 'POST',
        url: '/v1/forecast',
        headers: auth(KEY_GARDEN),
        payload: { horizon: 1000, frequency: 'day', seasonLength: 366, holdoutOrigins: 12, series: [{ sku: 'HEAVY', demand: daily(10_000) }] },
      })
      expect(res.statusCode).toBe(413)
      const body = res.json()
      expect(body.type).toBe('https://almanac.example/problems/fit-cost-too-high')
      // 10,000 points x 366 x 12 origins x the default pool's candidate models.
      expect(body.detail).toContain(`asks for ${10_000 * 366 * 12 * MODEL_REGISTRY.length} units of fitting work`)
      expect(body.detail).toContain('at most 50000000 (SYNC_MAX_COST)')
    })

    it('counts only the listed candidate models', async () => {
      const res = await app.inject({
        method: 'POST',
        url: '/v1/forecast',
        headers: auth(KEY_GARDEN),
        payload: { horizon: 3, frequency: 'day', seasonLength: 7, models: ['last-value'], series: [{ sku: 'LIGHT', demand: daily(60) }] },
      })
      expect(res.statusCode).toBe(200)
      expect(res.json().items[0].model).toBe('last-value')
    })
  })

  describe('time limit and a free event loop', () => {
    let app: FastifyInstance
    // The app's own pool, wrapped to tell whether a fit is under way when a probe answers.
    const pool = createSyncFitPool({ threads: 1, seriesTimeoutMs: 1500 })
    let fitsInFlight = 0
    const fitter: SyncFitter = {
      fit: async (settings, series) => {
        fitsInFlight++
        try {
          return await pool.fit(settings, series)
        } finally {
          fitsInFlight--
        }
      },
      close: () => pool.close(),
    }
    let entered: () => void
    const handling = new Promise<void>((resolve) => {
      entered = resolve
    })
    beforeAll(async () => {
      app = await build({ config: testConfig({ syncMaxCost: 1e12 }), gateway: new InMemoryGatewayDouble(), syncFits: fitter })
      app.addHook('preHandler', async (request) => {
        if (request.url === '/v1/forecast') entered()
      })
    })
    afterAll(async () => {
      await app.close()
      await pool.close()
    })

    it('answers /healthz while a series fits, and stops the series at the limit (seen failing before the fix)', async () => {
      const order: string[] = []
      // About 4.5 s of fitting on this machine (bench/RESULTS.md), well past the 1.5 s limit.
      const forecast = app
        .inject({
          method: 'POST',
          url: '/v1/forecast',
          headers: auth(KEY_GARDEN),
          payload: { horizon: 30, frequency: 'day', seasonLength: 366, holdoutOrigins: 2, series: [{ sku: 'SLOW', demand: daily(3000) }] },
        })
        .then((res) => {
          order.push('forecast')
          return res
        })
      await handling
      // Probes one after another, each needing the event loop: each answers while the fit is under way.
      for (let i = 0; i < 5; i++) {
        const health = await app.inject({ url: '/healthz' })
        expect(health.statusCode).toBe(200)
        order.push(fitsInFlight === 1 ? 'healthz during fit' : 'healthz')
      }
      const res = await forecast
      expect(order).toEqual([...Array.from({ length: 5 }, () => 'healthz during fit'), 'forecast'])
      expect(res.statusCode).toBe(200)
      const [item] = res.json().items
      expect(item.sku).toBe('SLOW')
      expect(item.failure.code).toBe('fit-time-limit')
      expect(item.failure.message).toContain('1500 ms')
    })

    it('the pool fits again after a thread was ended', async () => {
      const res = await app.inject({
        method: 'POST',
        url: '/v1/forecast',
        headers: auth(KEY_GARDEN),
        payload: { horizon: 2, series: [{ sku: 'AFTER', demand: [5, 6, 7, 8, 9, 10] }] },
      })
      expect(res.statusCode).toBe(200)
      expect(res.json().items[0].failure).toBeUndefined()
    })
  })
})
