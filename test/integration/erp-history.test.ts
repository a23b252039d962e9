import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createHash } from 'node:crypto'
import type { FastifyInstance } from 'fastify'
import { HistoryStore } from '../../src/storage/histories/history-store.js'
import { IdempotencyStore } from '../../src/storage/erp/idempotency-store.js'
import type { RunMachinery } from '../../src/queue/gateway.js'
import { RunSettings } from '../../src/schemas/run.js'
import { startService, type TestService } from '../helpers/service.js'
import { syntheticSeries, waitFor } from '../queue/fixtures.js'

// Stored histories through the real app, gateway, queue and sandboxed worker against a real Redis.
const sha256 = (s: string) => createHash('sha256').update(s, 'utf8').digest('hex')
const GARDEN = 'garden-erp-key-0123456789abcdef'
const HEATING = 'heating-erp-key-0123456789abcdef'
const as = (key: string) => ({ authorization: `Bearer ${key}` })

let service: TestService
let app: FastifyInstance
let gateway: RunMachinery

beforeAll(async () => {
  service = await startService('erp-history', {
    config: {
      apiKeys: new Map([
        ['garden', [sha256(GARDEN)]],
        ['heating', [sha256(HEATING)]],
      ]),
      chunkSize: 4,
      workerConcurrency: 1,
    },
    appDeps: ({ redis, prefix }) => ({
      histories: new HistoryStore(redis, { prefix }),
      idempotency: new IdempotencyStore(redis, { prefix }),
    }),
  })
  ;({ app, gateway } = service)
})

afterAll(() => service?.close())

const submit = async (payload: object, key = GARDEN, headers: Record<string, string> = {}) =>
  app.inject({ method: 'POST', url: '/v1/runs', headers: { ...as(key), ...headers }, payload })

async function finishedResults(runId: string, key = GARDEN): Promise<Map<string, Record<string, unknown>>> {
  const run = await waitFor(async () => {
    const r = (await app.inject({ url: `/v1/runs/${runId}`, headers: as(key) })).json()
    return r.status === 'queued' || r.status === 'running' ? undefined : r
  }, 90_000, `run ${runId}`)
  expect(run.status).toBe('succeeded')
  const items = new Map<string, Record<string, unknown>>()
  let cursor: string | null = null
  do {
    const q: string = cursor ? `?limit=100&cursor=${encodeURIComponent(cursor)}` : '?limit=100'
    const page = (await app.inject({ url: `/v1/runs/${runId}/results${q}`, headers: as(key) })).json()
    for (const item of page.items) items.set(item.sku, item)
    cursor = page.nextCursor
  } while (cursor !== null)
  return items
}

const series = syntheticSeries(10, 30, 'SEED').map((s) => ({ ...s, firstPeriod: '2023-01', frequency: 'month' as const }))
const tagOf = (i: number) => (i % 2 === 0 ? ['category:garden', 'site:north'] : ['category:garden', 'site:south'])

describe('runs over stored histories', () => {
  beforeAll(async () => {
    // Bulk JSON upload of every series, then tags by PUT for a known split.
    const res = await app.inject({ method: 'POST', url: '/v1/history?mode=replace', headers: as(GARDEN), payload: { series } })
    expect(res.json().skus).toEqual({ created: 10, updated: 0, rejected: 0, alreadyApplied: 0, zeroed: 0 })
    for (const [i, s] of series.entries()) {
      const put = await app.inject({
        method: 'PUT',
        url: `/v1/skus/${s.sku}/history`,
        headers: as(GARDEN),
        payload: { frequency: 'month', firstPeriod: s.firstPeriod, demand: s.demand, tags: tagOf(i) },
      })
      expect(put.statusCode).toBe(200)
    }
  })

  it('a run by skus gives the same results as the same series inline', async () => {
    const skus = series.slice(0, 5).map((s) => s.sku)
    const inline = await submit({ horizon: 4, series: series.slice(0, 5) })
    const stored = await submit({ horizon: 4, scope: { skus } })
    expect(inline.statusCode).toBe(202)
    expect(stored.statusCode).toBe(202)
    expect(stored.json().progress.total).toBe(5)
    expect(stored.json().scope).toEqual({ skus })
    expect(inline.json().scope).toBeNull()
    const a = await finishedResults(inline.json().id)
    const b = await finishedResults(stored.json().id)
    expect([...b.keys()].sort()).toEqual([...skus].sort())
    for (const sku of skus) expect(b.get(sku)).toEqual(a.get(sku))
  })

  it('selects by tags (every tag must match) and all, across several chunks', async () => {
    const north = await finishedResults((await submit({ horizon: 2, scope: { tags: ['site:north', 'category:garden'] } })).json().id)
    expect([...north.keys()].sort()).toEqual(series.filter((_, i) => i % 2 === 0).map((s) => s.sku))
    const all = await finishedResults((await submit({ horizon: 2, scope: { all: true } })).json().id)
    expect(all.size).toBe(10)
  })

  it('refuses unknown SKUs with one error each, an empty scope, two sources at once and the old flat fields', async () => {
    const unknown = await submit({ horizon: 2, scope: { skus: [series[0]!.sku, 'NO-SUCH', 'ALSO-NOT'] } })
    expect(unknown.statusCode).toBe(400)
    expect(unknown.json().errors).toEqual([
      { path: 'scope.skus[1]', message: 'no stored history for SKU "NO-SUCH"' },
      { path: 'scope.skus[2]', message: 'no stored history for SKU "ALSO-NOT"' },
    ])
    const empty = await submit({ horizon: 2, scope: { tags: ['site:east'] } })
    expect(empty.statusCode).toBe(400)
    expect(empty.json().errors).toEqual([{ path: 'scope.tags', message: 'the scope matches no stored history' }])
    const twoKinds = await submit({ horizon: 2, scope: { all: true, skus: [series[0]!.sku] } })
    expect(twoKinds.statusCode).toBe(400)
    expect(twoKinds.json().errors).toEqual([{ path: 'scope.all', message: 'give exactly one of skus, tags or all (got skus, all)' }])
    const both = await submit({ horizon: 2, scope: { all: true }, series: series.slice(0, 1) })
    expect(both.json().errors).toEqual([{ path: 'scope', message: 'give either series or scope, not both' }])
    const flat = await submit({ horizon: 2, skus: [series[0]!.sku] })
    expect(flat.statusCode).toBe(400)
    expect(flat.json().errors).toEqual([
      { path: 'skus', message: 'is not a field of this request' },
      { path: 'series', message: 'give series, or stored histories with scope' },
    ])
  })

  it('skips and counts SKUs of a scope that lost their history since it was checked (a schedule firing)', async () => {
    // The HTTP route refuses unknown SKUs up front; the gateway, which schedule firings use, skips them.
    const { record, missingSkus } = await gateway.submitScope!('garden', RunSettings.parse({ horizon: 2 }), { skus: [series[0]!.sku, 'GONE-1', 'GONE-2'] })
    expect(missingSkus).toBe(2)
    expect(record.progress.total).toBe(1)
    expect(record.scope).toEqual({ skus: [series[0]!.sku, 'GONE-1', 'GONE-2'] })
  })

  it('keeps tenants apart: another tenant cannot select these SKUs and has nothing under all', async () => {
    const res = await submit({ horizon: 2, scope: { skus: [series[0]!.sku] } }, HEATING)
    expect(res.statusCode).toBe(400)
    expect((await submit({ horizon: 2, scope: { all: true } }, HEATING)).statusCode).toBe(400)
    expect((await app.inject({ url: `/v1/skus/${series[0]!.sku}/history`, headers: as(HEATING) })).statusCode).toBe(404)
  })

  it('a run after appending new actuals sees them (the last-value forecast repeats the last appended demand)', async () => {
    const sku = series[1]!.sku
    // The stored history ends 2025-06 (30 months from 2023-01); append July and August 2025 as daily rows.
    const csv = `sku,period,demand\n${sku},2025-07-03,40\n${sku},2025-07-21,2\n${sku},2025-08-11,17.5\n`
    const up = await app.inject({ method: 'POST', url: '/v1/history?mode=overwrite', headers: { ...as(GARDEN), 'content-type': 'text/csv' }, payload: csv })
    expect(up.json().rows).toEqual({ accepted: 3, rejected: 0 })
    const items = await finishedResults((await submit({ horizon: 2, scope: { skus: [sku] }, models: ['last-value'] })).json().id)
    const item = items.get(sku) as { forecast: { period: string; demand: number }[] }
    expect(item.forecast.map((p) => p.period)).toEqual(['2025-09', '2025-10'])
    expect(item.forecast[0]!.demand).toBe(17.5)
  })

  it('replays a run submitted twice with one Idempotency-Key: same run, no second one', async () => {
    const first = await submit({ horizon: 2, tags: ['site:south'] }, GARDEN, { 'idempotency-key': 'nightly-2025-08-31' })
    const again = await submit({ horizon: 2, tags: ['site:south'] }, GARDEN, { 'idempotency-key': 'nightly-2025-08-31' })
    expect(again.headers['almanac-reused-answer']).toBe('true')
    expect(again.json().id).toBe(first.json().id)
    const changed = await submit({ horizon: 3, tags: ['site:south'] }, GARDEN, { 'idempotency-key': 'nightly-2025-08-31' })
    expect(changed.statusCode).toBe(422)
  })
})
