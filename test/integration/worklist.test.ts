import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import { AccuracyTrackingHistoryStore } from '../../src/storage/erp/accuracy-hook.js'
import type { RunMachinery } from '../../src/queue/gateway.js'
import { startService, type TestService } from '../helpers/service.js'
import { waitFor } from '../queue/fixtures.js'

// The planners' worklist end to end: stored histories -> publishing runs -> actuals -> GET /v1/worklist.
let service: TestService
let app: FastifyInstance
let gateway: RunMachinery

beforeAll(async () => {
  service = await startService('worklist', {
    config: { chunkSize: 3, workerConcurrency: 1 },
    erp: true,
    appDeps: (ctx) => ({
      histories: new AccuracyTrackingHistoryStore(ctx.redis, { prefix: ctx.prefix }, ctx.erp!.services.accuracy, () => undefined),
    }),
  })
  ;({ app, gateway } = service)
})

afterAll(() => service?.close())

const put = (sku: string, demand: (number | null)[]) =>
  app.inject({ method: 'PUT', url: `/v1/skus/${sku}/history`, payload: { frequency: 'month', firstPeriod: '2024-01', demand } })
const flat = (level: number, n = 24) => Array.from({ length: n }, () => level)
const worklist = async (query = '') => {
  const res = await app.inject({ url: `/v1/worklist${query}` })
  expect(res.statusCode).toBe(200)
  return res.json() as { items: { sku: string; kinds: string[]; review: { state: string; note: string } | null; [k: string]: unknown }[]; nextCursor: string | null }
}
const kindsOf = (page: Awaited<ReturnType<typeof worklist>>) => page.items.map((i) => [i.sku, i.kinds])

async function publish(skus: string[]): Promise<string> {
  const res = await app.inject({ method: 'POST', url: '/v1/runs', payload: { horizon: 6, scope: { skus } } })
  expect(res.statusCode).toBe(202)
  const id: string = res.json().id
  await waitFor(async () => {
    const r = await gateway.get('default', id)
    return r?.status === 'succeeded' ? r : undefined
  }, 60_000, 'the run')
  return id
}

const SKUS = ['GLOVE-BIASED', 'HOSE-EMPTY', 'RAKE-STEADY', 'SEED-NEW']

describe('the worklist', { timeout: 120_000 }, () => {
  let first: string
  let second: string
  beforeAll(async () => {
    expect((await put('GLOVE-BIASED', flat(100))).statusCode).toBe(201)
    expect((await put('RAKE-STEADY', flat(50))).statusCode).toBe(201)
    expect((await put('SEED-NEW', [3, 4, 5, 4, 3])).statusCode).toBe(201)
    expect((await put('HOSE-EMPTY', [null, null, null])).statusCode).toBe(201)
    first = await publish(SKUS)
  })

  it('after the first run: the failed item and the short history, nothing changed yet', async () => {
    const page = await worklist()
    expect(kindsOf(page)).toEqual([
      ['HOSE-EMPTY', ['failed']],
      ['SEED-NEW', ['short-history']],
    ])
    expect(page.items[0]).toMatchObject({ failure: { code: 'empty-series' }, historyLength: null, runId: first, review: null, change: null })
    expect(page.items[1]).toMatchObject({ historyLength: 5, failure: null, runId: first })
  })

  it('actuals make a biased SKU; a changed history makes a large change in the next run', async () => {
    // Forecast 100 for 2026-01.. (flat history); actuals 130, 125, 140, 135, 120: tracking signal
    // 150 / 30 = 5 > 4 (hand-computed, as in erp-accuracy.test.ts).
    expect((await put('GLOVE-BIASED', [...flat(100), 130, 125, 140, 135, 120])).statusCode).toBe(200)
    // RAKE-STEADY's level moves from 50 to 80: the next forecast of the same months is +60 %.
    expect((await put('RAKE-STEADY', flat(80))).statusCode).toBe(200)
    second = await publish(SKUS)
    const page = await worklist()
    expect(kindsOf(page)).toEqual([
      ['GLOVE-BIASED', ['biased']],
      ['HOSE-EMPTY', ['failed']],
      ['RAKE-STEADY', ['large-change']],
      ['SEED-NEW', ['short-history']],
    ])
    const glove = page.items[0]!
    expect(glove.trackingSignal).toMatchObject({ scoredPeriods: 5, trackingSignal: 5 })
    const rake = page.items[2]!
    expect(rake).toMatchObject({ runId: second, change: { previousRunId: first, commonPeriods: 6 } })
    // In percent, like WORKLIST_CHANGE_PERCENT: +60 % (above).
    expect((rake.change as { percent: number }).percent).toBeCloseTo(60, 4)
    expect((await app.inject({ url: '/v1/worklist/counts' })).json()).toEqual({ biased: 1, 'large-change': 1, failed: 1, 'short-history': 1 })
  })

  it('filters by kind and pages with a cursor', async () => {
    expect(kindsOf(await worklist('?kind=biased'))).toEqual([['GLOVE-BIASED', ['biased']]])
    expect(kindsOf(await worklist('?kind=failed'))).toEqual([['HOSE-EMPTY', ['failed']]])
    const p1 = await worklist('?limit=3')
    expect(p1.items.map((i) => i.sku)).toEqual(['GLOVE-BIASED', 'HOSE-EMPTY', 'RAKE-STEADY'])
    const p2 = await worklist(`?limit=3&cursor=${p1.nextCursor}`)
    expect(p2).toEqual({ items: [expect.objectContaining({ sku: 'SEED-NEW' })], nextCursor: null })
  })

  it('acknowledges with a note (also on the accuracy exception of a biased SKU) and snoozes until the next run', async () => {
    const ack = await app.inject({ method: 'POST', url: '/v1/worklist/GLOVE-BIASED/acknowledge', payload: { note: 'spring promotion' } })
    expect(ack.statusCode).toBe(200)
    expect(ack.json().review).toMatchObject({ state: 'acknowledged', note: 'spring promotion' })
    expect((await worklist('?kind=biased')).items[0]!.review).toMatchObject({ state: 'acknowledged', note: 'spring promotion' })
    const exceptions = (await app.inject({ url: '/v1/accuracy/exceptions' })).json()
    expect(exceptions.items[0]).toMatchObject({ sku: 'GLOVE-BIASED', review: { state: 'acknowledged', note: 'spring promotion' } })

    expect((await app.inject({ method: 'POST', url: '/v1/worklist/SEED-NEW/snooze', payload: {} })).statusCode).toBe(200)
    expect((await worklist()).items.map((i) => i.sku)).not.toContain('SEED-NEW')
    expect((await worklist('?includeSnoozed=true')).items.find((i) => i.sku === 'SEED-NEW')?.review).toMatchObject({ state: 'snoozed', note: '' })
    // The next run publishes SEED-NEW again, still short: it is back, without the snooze.
    await publish(['SEED-NEW'])
    expect((await worklist('?kind=short-history')).items).toEqual([expect.objectContaining({ sku: 'SEED-NEW', review: null })])
  })

  it('re-publishing without the condition clears it; deleting the history clears the SKU', async () => {
    expect((await put('SEED-NEW', flat(4))).statusCode).toBe(200)
    await publish(['SEED-NEW'])
    expect((await worklist('?kind=short-history')).items).toEqual([])
    expect((await app.inject({ method: 'DELETE', url: '/v1/skus/HOSE-EMPTY/history' })).statusCode).toBe(204)
    expect((await worklist('?kind=failed')).items).toEqual([])
    expect((await app.inject({ url: '/v1/worklist/counts' })).json()).toMatchObject({ failed: 0 })
  })

  it('answers bad input with a problem naming the field', async () => {
    const kind = await app.inject({ url: '/v1/worklist?kind=late' })
    expect(kind.statusCode).toBe(400)
    expect(kind.json().errors[0].path).toContain('kind')
    const extra = await app.inject({ method: 'POST', url: '/v1/worklist/RAKE-STEADY/acknowledge', payload: { note: 'x', planner: 'dana' } })
    expect(extra.statusCode).toBe(400)
    expect((await app.inject({ url: '/v1/worklist?cursor=abc.def' })).statusCode).toBe(400)
    const missing = await app.inject({ method: 'POST', url: '/v1/worklist/TROWEL/acknowledge', payload: { note: 'x' } })
    expect(missing.statusCode).toBe(404)
    expect(missing.headers['content-type']).toContain('application/problem+json')
    // Nothing was lost: the review made before is still there.
    expect((await worklist('?kind=biased')).items[0]!.review).toMatchObject({ note: 'spring promotion' })
  })
})
