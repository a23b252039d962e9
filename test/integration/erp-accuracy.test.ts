import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import type { Redis } from 'ioredis'
import { AccuracyTrackingHistoryStore } from '../../src/storage/erp/accuracy-hook.js'
import { latestKey, runKeys } from '../../src/storage/keys.js'
import { RunStore } from '../../src/storage/runs/run-store.js'
import type { RunMachinery } from '../../src/queue/gateway.js'
import { startService, type ErpMachinery, type TestService } from '../helpers/service.js'
import { prepareItems } from '../../src/storage/items/prepared-item.js'
import { waitFor } from '../queue/fixtures.js'

// Accuracy tracking end to end: stored histories -> run -> new actuals uploaded -> scored.
let service: TestService
let prefix: string
let app: FastifyInstance
let gateway: RunMachinery
let redis: Redis
let erp: ErpMachinery
const hookErrors: unknown[] = []

beforeAll(async () => {
  service = await startService('erp-accuracy', {
    config: { chunkSize: 5, workerConcurrency: 1 },
    erp: true,
    appDeps: (ctx) => ({
      histories: new AccuracyTrackingHistoryStore(ctx.redis, { prefix: ctx.prefix }, ctx.erp!.services.accuracy, (err) =>
        hookErrors.push(err),
      ),
    }),
  })
  ;({ prefix, app, gateway, redis } = service)
  erp = service.erp!
})

afterAll(() => service?.close())

const runs = () => new RunStore(redis, { prefix, resultTtlSeconds: 3600, recordTtlSeconds: 7200 })

const put = (sku: string, demand: (number | null)[]) =>
  app.inject({ method: 'PUT', url: `/v1/skus/${sku}/history`, payload: { frequency: 'month', firstPeriod: '2024-01', demand } })

const flat = (level: number) => Array.from({ length: 24 }, () => level)

describe('accuracy tracking', { timeout: 120_000 }, () => {
  let runId: string
  beforeAll(async () => {
    // Constant histories: every candidate gives the same flat line, so the forecast is the level
    // (2026-01 .. 2026-06 after 24 months from 2024-01).
    expect((await put('HOSE-BIASED', flat(100))).statusCode).toBe(201)
    expect((await put('HOSE-STEADY', flat(50))).statusCode).toBe(201)
    const res = await app.inject({ method: 'POST', url: '/v1/runs', payload: { horizon: 6, scope: { skus: ['HOSE-BIASED', 'HOSE-STEADY'] } } })
    expect(res.statusCode).toBe(202)
    runId = res.json().id
    await waitFor(async () => {
      const r = await gateway.get('default', res.json().id)
      return r?.status === 'succeeded' ? r : undefined
    }, 60_000, 'the run')
  })

  it('nothing is scored before actuals arrive', async () => {
    const f = (await app.inject({ url: '/v1/skus/HOSE-BIASED/forecast' })).json()
    expect(f.forecast.map((p: { period: string; demand: number }) => [p.period, p.demand])).toEqual(
      ['2026-01', '2026-02', '2026-03', '2026-04', '2026-05', '2026-06'].map((p) => [p, 100]),
    )
    expect((await app.inject({ url: '/v1/skus/HOSE-BIASED/accuracy' })).statusCode).toBe(404)
  })

  // Hand-computed: forecast 100 for each month; actuals 130, 125, 140, 135, 120 give errors
  // (actual - forecast) +30, +25, +40, +35, +20: sum 150, MAE 30, bias +30, TS = 150 / 30 = 5 > 4.
  // MAPE = 100 * (0.230769 + 0.2 + 0.285714 + 0.259259 + 0.166667) / 5 = 22.848 %.
  it('scores new actuals against the latest forecast and flags a biased SKU', async () => {
    // The run's results expire long before monthly actuals arrive: the forecast is no longer
    // served, but scoring uses the points the SKU's latest record keeps without expiry.
    await redis.unlink(runKeys(prefix, 'default', runId).items)
    expect(await redis.ttl(latestKey(prefix, 'default'))).toBe(-1)
    expect((await app.inject({ url: '/v1/skus/HOSE-BIASED/forecast' })).statusCode).toBe(404)
    expect((await put('HOSE-BIASED', [...flat(100), 130, 125, 140, 135, 120])).statusCode).toBe(200)
    const acc = (await app.inject({ url: '/v1/skus/HOSE-BIASED/accuracy' })).json()
    expect(acc).toMatchObject({ sku: 'HOSE-BIASED', scoredPeriods: 5, mae: 30, bias: 30, trackingSignal: 5, flagged: true, trackingLimit: 4 })
    expect(acc.mape).toBeCloseTo(22.848, 3)
    expect(acc.periods.map((p: { period: string; deviation: number }) => [p.period, p.deviation])).toEqual([
      ['2026-01', 30],
      ['2026-02', 25],
      ['2026-03', 40],
      ['2026-04', 35],
      ['2026-05', 20],
    ])
    expect(acc.periods.every((p: { runId: string }) => p.runId === runId)).toBe(true)
    expect(hookErrors).toEqual([])
  })

  // Errors +2, -2, +1, -1, 0: sum 0, TS 0.
  it('leaves an unbiased SKU off the exception list', async () => {
    await put('HOSE-STEADY', [...flat(50), 52, 48, 51, 49, 50])
    const acc = (await app.inject({ url: '/v1/skus/HOSE-STEADY/accuracy' })).json()
    expect(acc).toMatchObject({ scoredPeriods: 5, bias: 0, trackingSignal: 0, flagged: false })
    expect(acc.mae).toBeCloseTo(1.2, 12)
    const ex = (await app.inject({ url: '/v1/accuracy/exceptions' })).json()
    expect(ex.items.map((i: { sku: string }) => i.sku)).toEqual(['HOSE-BIASED'])
    expect(ex.nextCursor).toBeNull()
  })

  it('does not count a period twice when the same actuals are uploaded again', async () => {
    await put('HOSE-BIASED', [...flat(100), 130, 125, 140, 135, 120])
    await app.inject({
      method: 'POST',
      url: '/v1/history?frequency=month',
      payload: { mode: 'overwrite', series: [{ sku: 'HOSE-BIASED', firstPeriod: '2026-01', demand: [130, 125, 140, 135, 120] }] },
    })
    const acc = (await app.inject({ url: '/v1/skus/HOSE-BIASED/accuracy' })).json()
    expect(acc).toMatchObject({ scoredPeriods: 5, trackingSignal: 5 })
  })

  // Correcting 2026-05 from 120 to 80: errors +30, +25, +40, +35, -20: sum 110, MAE 30, TS 3.67, below 4.
  // The smoothed signal (weight 0.1, from 0) still flags it: E = 10.1808 - 2 = 8.1808, M = 10.1808 + 2 = 12.1808,
  // T = 0.6716 > 0.5635; a further unbiased period would take it off.
  it('a corrected actual replaces the old one and rescores the SKU', async () => {
    await app.inject({
      method: 'POST',
      url: '/v1/history?frequency=month',
      payload: { mode: 'overwrite', series: [{ sku: 'HOSE-BIASED', firstPeriod: '2026-05', demand: [80] }] },
    })
    const acc = (await app.inject({ url: '/v1/skus/HOSE-BIASED/accuracy' })).json()
    expect(acc.scoredPeriods).toBe(5)
    expect(acc.trackingSignal).toBeCloseTo(110 / 30, 12)
    expect(acc.smoothedTrackingSignal).toBeCloseTo(8.1808 / 12.1808, 12)
    expect(acc.flaggedBy).toEqual(['smoothed-tracking-signal'])
    expect((await app.inject({ url: '/v1/accuracy/exceptions' })).json().items.map((i: { sku: string }) => i.sku)).toEqual(['HOSE-BIASED'])
  })

  it('keeps the forecast of the run created last, whichever finishes last', async () => {
    const item = (value: number) => ({
      sku: 'RAKE', frequency: 'month', model: 'last-value', family: 'level', params: {}, holdoutErrors: null, candidates: [], warnings: [],
      modelChoice: { method: 'none', rankBy: 'mase', holdoutPeriods: 0, holdoutOrigins: 1 },
      forecast: [{ period: '2027-01', demand: value, intervals: [] }],
      intervalMethod: 'none',
    }) as const
    const at = new Date(3000)
    expect(await runs().updateLatest('default', 'run-new', 2000, at, prepareItems([item(7)]))).toBe(1)
    expect(await runs().updateLatest('default', 'run-old', 1000, at, prepareItems([item(3)]))).toBe(0)
    expect(await runs().updateLatest('default', 'run-err', 3000, at, prepareItems([{ sku: 'RAKE', frequency: 'month', failure: { code: 'series-too-short', message: 'x' } }]))).toBe(0)
    const [latest] = await runs().latestPoints('default', ['RAKE'])
    expect(latest?.runId).toBe('run-new')
    expect([...latest!.points]).toEqual([['2027-01', 7]])
    // Scored against run-new's forecast: 7 vs 10.
    const out = await erp.services.accuracy.rescore('default', { sku: 'RAKE', frequency: 'month', firstPeriod: '2027-01', demand: [10] })
    expect(out).toMatchObject({ added: 1, corrected: 0, removed: 0, summary: { scoredPeriods: 1, bias: 3 } })
  })

  it('pages the exception list by SKU with a cursor', async () => {
    const periods = ['2027-01', '2027-02', '2027-03', '2027-04', '2027-05']
    for (const sku of ['PAGE-C', 'PAGE-A', 'PAGE-B']) {
      await runs().updateLatest('paging', `run-${sku}`, 1, new Date(2), prepareItems([
        {
          sku, frequency: 'month', model: 'last-value', family: 'level', params: {}, holdoutErrors: null, candidates: [], warnings: [],
          modelChoice: { method: 'none', rankBy: 'mase', holdoutPeriods: 0, holdoutOrigins: 1 },
          forecast: periods.map((period) => ({ period, demand: 10, intervals: [] })),
          intervalMethod: 'none',
        },
      ]))
      // Errors +5 in each of 5 periods: TS = 25 / 5 = 5.
      await erp.services.accuracy.rescore('paging', { sku, frequency: 'month', firstPeriod: '2027-01', demand: periods.map(() => 15) })
    }
    const first = await erp.services.accuracy.exceptions('paging', 2)
    expect(first.items.map((i) => [i.sku, i.trackingSignal])).toEqual([['PAGE-A', 5], ['PAGE-B', 5]])
    const second = await erp.services.accuracy.exceptions('paging', 2, first.nextCursor!)
    expect(second.items.map((i) => i.sku)).toEqual(['PAGE-C'])
    expect(second.nextCursor).toBeNull()
  })

  it('records nothing for a SKU without a forecast, and pages the list with a cursor', async () => {
    const out = await erp.services.accuracy.rescore('default', { sku: 'NO-RUN', frequency: 'month', firstPeriod: '2026-01', demand: [3] })
    expect(out).toEqual({ added: 0, corrected: 0, removed: 0, summary: null })
    const bad = await app.inject({ url: '/v1/accuracy/exceptions?cursor=not-ours!' })
    expect(bad.statusCode).toBe(400)
  })
})
