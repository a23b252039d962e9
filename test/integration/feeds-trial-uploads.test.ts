import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createHash } from 'node:crypto'
import type { FastifyInstance } from 'fastify'
import { HistoryStore } from '../../src/storage/histories/history-store.js'
import { IdempotencyStore } from '../../src/storage/erp/idempotency-store.js'
import { startService, type TestService } from '../helpers/service.js'
import { waitFor } from '../queue/fixtures.js'

// The nightly-feed trial of issue 13 in miniature, through the real app, queue and worker against a
// real Redis. Invented distributor data; the quantities judged are sums worked by hand beside each check.
const sha256 = (s: string) => createHash('sha256').update(s, 'utf8').digest('hex')
const KEY = 'feeds-trial-key-0123456789abcdef'
const as = { authorization: `Bearer ${KEY}` }

let service: TestService
let app: FastifyInstance

beforeAll(async () => {
  service = await startService('feeds-trial-uploads', {
    config: { apiKeys: new Map([['garden', [sha256(KEY)]]]), chunkSize: 4, workerConcurrency: 1 },
    appDeps: ({ redis, prefix }) => ({
      histories: new HistoryStore(redis, { prefix }),
      idempotency: new IdempotencyStore(redis, { prefix }),
    }),
  })
  ;({ app } = service)
})

afterAll(() => service?.close())

const uploadCsv = (query: string, body: string, headers: Record<string, string> = {}) =>
  app.inject({ method: 'POST', url: `/v1/history${query}`, headers: { ...as, ...headers, 'content-type': 'text/csv' }, payload: body })

async function finishedItem(runId: string, sku: string): Promise<Record<string, unknown>> {
  const run = await waitFor(async () => {
    const r = (await app.inject({ url: `/v1/runs/${runId}`, headers: as })).json()
    return r.status === 'queued' || r.status === 'running' ? undefined : r
  }, 90_000, `run ${runId}`)
  expect(run.status).toBe('succeeded')
  const page = (await app.inject({ url: `/v1/runs/${runId}/results?sku=${encodeURIComponent(sku)}`, headers: as })).json()
  return page.items[0]
}

describe('feeds trial: uploads', () => {
  it('(1) two incremental transaction files for one month add up, and a resent batch is not added twice', async () => {
    // Earlier months as period totals (overwrite by default), then March 2026 arrives as transactions.
    const totals = await uploadCsv('', 'sku,period,demand\nHEAT-TAPE-5M,2026-01,80\nHEAT-TAPE-5M,2026-02,90\n')
    expect(totals.json()).toMatchObject({ mode: 'overwrite', skus: { created: 1 } })
    // File 1: 20 + 45 = 65 units; file 2: 30 units. March = 65 + 30 = 95.
    const file1 = 'sku,period,demand\nHEAT-TAPE-5M,2026-03-02,20\nHEAT-TAPE-5M,2026-03-03,45\n'
    const file2 = 'sku,period,demand\nHEAT-TAPE-5M,2026-03-05,30\n'
    expect((await uploadCsv('?batch=erp-orders-20260303', file1)).json()).toMatchObject({ mode: 'add', skus: { updated: 1 } })
    expect((await uploadCsv('?batch=erp-orders-20260305', file2)).json()).toMatchObject({ mode: 'add', skus: { updated: 1 } })
    const history = async () => (await app.inject({ url: '/v1/skus/HEAT-TAPE-5M/history', headers: as })).json()
    expect(await history()).toMatchObject({ firstPeriod: '2026-01', demand: [80, 90, 95] })
    // The ERP resends file 2 under its batch id: still 95.
    const resent = await uploadCsv('?batch=erp-orders-20260305', file2)
    expect(resent.json()).toMatchObject({ skus: { updated: 0, alreadyApplied: 1 } })
    // And with an Idempotency-Key instead: the first answer again, nothing added (95 + 30 would be 125).
    const keyed = { 'idempotency-key': 'erp-orders-20260306' }
    const file3 = 'sku,period,demand\nHEAT-TAPE-5M,2026-03-06,5\n'
    expect((await uploadCsv('', file3, keyed)).statusCode).toBe(200)
    const replay = await uploadCsv('', file3, keyed)
    expect(replay.headers['almanac-reused-answer']).toBe('true')
    expect(await history()).toMatchObject({ demand: [80, 90, 100] })
    // A run over the stored history sees the summed month: last-value repeats 95 + 5 = 100.
    const run = await app.inject({ method: 'POST', url: '/v1/runs', headers: as, payload: { horizon: 1, scope: { skus: ['HEAT-TAPE-5M'] }, models: ['last-value'] } })
    expect(run.statusCode).toBe(202)
    const item = (await finishedItem(run.json().id, 'HEAT-TAPE-5M')) as { forecast: { period: string; demand: number }[] }
    expect(item.forecast).toMatchObject([{ period: '2026-04', demand: 100 }])
  })

  it('(7) per-SKU lead times in days give the safety stock computed by hand', async () => {
    // Policies stored with the histories. last-value on alternating demand has one-step errors of +-10, so its own
    // h-step variance is 100 * h (sd 10, 14.14, 17.32: the model's analytical variance, sigma^2 * h).
    const alternate = (n: number, lo: number, hi: number) => Array.from({ length: n }, (_, i) => (i % 2 === 0 ? lo : hi))
    const put = (sku: string, body: object) => app.inject({ method: 'PUT', url: `/v1/skus/${sku}/history`, headers: as, payload: body })
    expect((await put('FLEECE-JACKET-L', { frequency: 'month', firstPeriod: '2025-01', demand: alternate(12, 100, 110), replenishment: { leadTimeDays: 45, leadTimeSdDays: 10 } })).statusCode).toBe(201)
    expect((await put('GLOVES-WINTER', { frequency: 'week', firstPeriod: '2025-W01', demand: alternate(16, 20, 30), replenishment: { leadTimeDays: 10, reviewDays: 7, minimumOrder: 50, packSize: 12 } })).statusCode).toBe(201)
    expect((await put('SOCKS-WOOL', { frequency: 'week', firstPeriod: '2025-W01', demand: alternate(16, 20, 30) })).statusCode).toBe(201)
    const stored = (await app.inject({ url: '/v1/skus/GLOVES-WINTER/history', headers: as })).json()
    expect(stored.replenishment).toEqual({ leadTimeDays: 10, reviewDays: 7, minimumOrder: 50, packSize: 12 })

    // Run-level defaults: 95 % service, and a lead time of 1 month for SKUs without their own.
    const run = await app.inject({
      method: 'POST',
      url: '/v1/runs',
      headers: as,
      payload: {
        horizon: 6,
        frequency: 'month',
        models: ['last-value'],
        scope: { skus: ['FLEECE-JACKET-L', 'GLOVES-WINTER', 'SOCKS-WOOL'] },
        replenishment: { serviceLevel: 0.95, leadTimePeriods: 1 },
      },
    })
    expect(run.statusCode).toBe(202)
    const runId = run.json().id as string
    type Figures = { leadTimePeriods: number; coverDemand: number; sigma: number; safetyStock: number; reorderPoint: number; orderQuantity: number }
    type Point = { demand: number; intervals: { level: number; low: number; high: number }[] }
    const fleece = (await finishedItem(runId, 'FLEECE-JACKET-L')) as { frequency: string; replenishment: Figures; forecast: Point[] }
    // The step spreads are the ones the 95% band is drawn with: the model's own sd (10 at step 1), widened by the
    // interval calibration (a t quantile for a short history, or the errors seen at rolling origins) by
    // w = half-width of the 95% band at step 1 / (10 x z(97.5 %) = 1.959964). Safety stock and the band then agree.
    const widening = (p: Point) => (p.intervals.find((i) => i.level === 95)!.high - p.demand) / (10 * 1.959964)
    const wFleece = widening(fleece.forecast[0]!)
    expect(wFleece).toBeGreaterThanOrEqual(1) // calibration only widens

    // Sigma = sqrt(LT * sigma_d^2 + d^2 * sigma_LT^2) (Silver, Pyke & Peterson 1998, from memory), with LT * sigma_d^2
    // taken as the forecast's step variances summed over the lead time. Calendar rule: a month is 365.25 / 12 = 30.4375 days.
    // FLEECE-JACKET-L, monthly, forecast 110 per month:
    //   L = 45 / 30.4375 = 1.478439 months -> steps weighted 1 and 0.478439
    //   coverDemand = 110 + 0.478439 * 110 = 162.6283
    //   summed variance = w^2 * (100 * 1 + 0.478439 * 200) = w^2 * 195.6879
    //   sigma_LT = 10 / 30.4375 = 0.328542 months, d = 162.6283 / 1.478439 = 110 -> d^2 sigma_LT^2 = 12100 * 0.107940 = 1306.073
    //   sigma = sqrt(w^2 * 195.6879 + 1306.073) (38.7526 at w = 1); z(95 %) = 1.644854
    //   safetyStock = ceil(z sigma); reorderPoint = ceil(162.6283 + z sigma)
    const sigmaFleece = Math.sqrt(wFleece ** 2 * 195.6879 + 1306.073)
    expect(fleece.frequency).toBe('month')
    expect(fleece.replenishment.leadTimePeriods).toBeCloseTo(1.478439, 6)
    expect(fleece.replenishment.coverDemand).toBeCloseTo(162.6283, 3)
    expect(fleece.replenishment.sigma).toBeCloseTo(sigmaFleece, 2)
    const fleeceStock = Math.ceil(1.644854 * sigmaFleece)
    const fleeceReorder = Math.ceil(162.6283 + 1.644854 * sigmaFleece)
    expect(fleece.replenishment).toMatchObject({ safetyStock: fleeceStock, reorderPoint: fleeceReorder })

    // GLOVES-WINTER, weekly, forecast 30 per week, reviewed weekly:
    //   L = 10 / 7 = 1.428571 weeks, R = 1 week -> c = 2.428571: steps weighted 1, 1, 0.428571
    //   coverDemand = 30 * 2.428571 = 72.8571; summed variance = w^2 * (100 + 200 + 0.428571 * 300) = w^2 * 428.571 (sigma_LT = 0)
    //   sigma = w * 20.7020 -> safetyStock = ceil(z sigma); order-up-to level = ceil(72.8571 + z sigma)
    //   orderQuantity: 30 per review period, raised to the minimum 50, in packs of 12 -> 5 packs = 60
    const gloves = (await finishedItem(runId, 'GLOVES-WINTER')) as { replenishment: Figures; forecast: Point[] }
    const sigmaGloves = widening(gloves.forecast[0]!) * 20.702
    expect(gloves.replenishment.sigma).toBeCloseTo(sigmaGloves, 2)
    expect(gloves.replenishment).toMatchObject({
      safetyStock: Math.ceil(1.644854 * sigmaGloves),
      reorderPoint: Math.ceil(72.8571 + 1.644854 * sigmaGloves),
      orderQuantity: 60,
    })

    // SOCKS-WOOL has no own lead time: the run's 1 month becomes 30.4375 / 7 = 4.348214 weeks, with a warning on the item.
    const socks = (await finishedItem(runId, 'SOCKS-WOOL')) as { replenishment: Figures; warnings: { code: string; message: string }[] }
    expect(socks.replenishment.leadTimePeriods).toBeCloseTo(4.348214, 6)
    expect(socks.warnings).toContainEqual({ code: 'period-setting-converted', message: expect.stringContaining('4.3482 week periods') })

    // The CSV export carries the figures: the first row of FLEECE-JACKET-L is an order placed now.
    const csv = await app.inject({ url: `/v1/runs/${runId}/results?sku=FLEECE-JACKET-L`, headers: { ...as, accept: 'text/csv' } })
    const [header, first] = csv.body.split('\r\n')
    const row = Object.fromEntries(header!.split(',').map((name, i) => [name, first!.split(',')[i]]))
    expect(row).toMatchObject({ safetyStock: String(fleeceStock), reorderPoint: String(fleeceReorder), serviceLevel: '0.95' })
  })
})

