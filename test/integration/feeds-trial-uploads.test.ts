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
})
