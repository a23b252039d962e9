import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import { AccuracyTrackingHistoryStore } from '../../src/storage/erp/accuracy-hook.js'
import type { RunMachinery } from '../../src/queue/gateway.js'
import { startService, type TestService } from '../helpers/service.js'
import { waitFor } from '../queue/fixtures.js'

// Deleting a SKU's history and its records, through the real app, queue and worker against a real Redis.
// Invented data; no forecast numbers are judged.
let service: TestService
let app: FastifyInstance
let gateway: RunMachinery

beforeAll(async () => {
  service = await startService('feeds-sku-delete', {
    config: { chunkSize: 5, workerConcurrency: 1 },
    erp: true,
    appDeps: (ctx) => ({
      histories: new AccuracyTrackingHistoryStore(ctx.redis, { prefix: ctx.prefix }, ctx.erp!.services.accuracy, () => undefined),
    }),
  })
  ;({ app, gateway } = service)
})

afterAll(() => service?.close())

const put = (sku: string, demand: number[], tags: string[] = []) =>
  app.inject({ method: 'PUT', url: `/v1/skus/${sku}/history`, payload: { frequency: 'month', firstPeriod: '2024-01', demand, tags } })
const flat = (level: number, n = 24) => Array.from({ length: n }, () => level)

describe('DELETE /v1/skus/{sku}/history', { timeout: 120_000 }, () => {
  it('removes the history, its tags, its latest forecast and its accuracy records, and leaves other SKUs', async () => {
    expect((await put('PRUNER-OLD', flat(40), ['category:garden'])).statusCode).toBe(201)
    expect((await put('PRUNER-NEW', flat(60), ['category:garden'])).statusCode).toBe(201)
    const run = await app.inject({ method: 'POST', url: '/v1/runs', payload: { horizon: 3, scope: { tags: ['category:garden'] } } })
    await waitFor(async () => ((await gateway.get('default', run.json().id))?.status === 'succeeded' ? true : undefined), 60_000, 'the run')
    // Actuals for the first forecast month: both SKUs get an accuracy record.
    expect((await put('PRUNER-OLD', [...flat(40), 45], ['category:garden'])).statusCode).toBe(200)
    expect((await put('PRUNER-NEW', [...flat(60), 55], ['category:garden'])).statusCode).toBe(200)
    expect((await app.inject({ url: '/v1/skus/PRUNER-OLD/accuracy' })).statusCode).toBe(200)
    // The publishing run summarised both SKUs for the SKU list's filters.
    const forecast = (await app.inject({ url: '/v1/skus?failed=false' })).json()
    expect(forecast.items.map((i: { sku: string }) => i.sku)).toEqual(['PRUNER-NEW', 'PRUNER-OLD'])
    const model = forecast.items[1].published.model as string

    const del = await app.inject({ method: 'DELETE', url: '/v1/skus/PRUNER-OLD/history' })
    expect(del.statusCode).toBe(204)
    expect(del.body).toBe('')
    for (const path of ['history', 'forecast', 'accuracy']) {
      expect((await app.inject({ url: `/v1/skus/PRUNER-OLD/${path}` })).statusCode).toBe(404)
    }
    const garden = (await app.inject({ url: '/v1/skus?tag=category:garden' })).json()
    expect(garden.items.map((i: { sku: string }) => i.sku)).toEqual(['PRUNER-NEW'])
    expect((await app.inject({ url: '/v1/skus/PRUNER-NEW/accuracy' })).statusCode).toBe(200)
    // The run's own results stay readable under the run until they expire.
    const page = (await app.inject({ url: `/v1/runs/${run.json().id}/results?sku=PRUNER-OLD` })).json()
    expect(page.items).toHaveLength(1)
    // Created again under the same code, the SKU is never scored against the deleted SKU's published forecasts.
    expect((await put('PRUNER-OLD', [...flat(40), 45])).statusCode).toBe(201)
    expect((await app.inject({ url: '/v1/skus/PRUNER-OLD/accuracy' })).statusCode).toBe(404)
    // Nor does it inherit the deleted SKU's published summary: no filter on it lists the new SKU.
    const listed = (await app.inject({ url: '/v1/skus?prefix=PRUNER-OLD' })).json()
    expect(listed.items.map((i: { sku: string; published?: unknown }) => [i.sku, i.published])).toEqual([['PRUNER-OLD', undefined]])
    expect((await app.inject({ url: `/v1/skus?model=${model}&prefix=PRUNER-OLD` })).json().items).toEqual([])
    expect((await app.inject({ method: 'DELETE', url: '/v1/skus/PRUNER-OLD/history' })).statusCode).toBe(204)
    // Again: nothing left to delete.
    const again = await app.inject({ method: 'DELETE', url: '/v1/skus/PRUNER-OLD/history' })
    expect(again.statusCode).toBe(404)
    expect(again.json()).toMatchObject({ status: 404, detail: 'No stored history for SKU PRUNER-OLD' })
  })
})
