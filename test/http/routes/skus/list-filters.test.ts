import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { ModelName } from '../../../../src/engine/index.js'
import type { ResultItem } from '../../../../src/runs/contract.js'
import { tallyItems } from '../../../../src/runs/tally.js'
import { prepareItems } from '../../../../src/storage/items/prepared-item.js'
import { RunStore } from '../../../../src/storage/runs/run-store.js'
import { exceptionsKey } from '../../../../src/storage/keys.js'
import { runRequest, syntheticSeries } from '../../../queue/fixtures.js'
import { KEY_GARDEN, auth } from '../../gateway-double.js'
import { buildHistoryApp, type HistoryApp } from '../../history-helpers.js'

// GET /v1/skus with the filters on each SKU's newest published outcome, against real Redis.
// Invented SKUs of the distributor; the summaries are written by a publishing chunk commit.
let h: HistoryApp
const headers = auth(KEY_GARDEN)

const ok = (sku: string, model: ModelName, mase: number, warnings: string[] = []): ResultItem => ({
  sku,
  frequency: 'month',
  model,
  family: 'level',
  params: {},
  modelChoice: { method: 'holdout', rankBy: 'mase', holdoutPeriods: 6, holdoutOrigins: 1 },
  holdoutErrors: { mae: 1, rmse: 1, mape: 10, smape: 10, mase, wape: 0.1 },
  candidates: [],
  forecast: [{ period: '2027-01', demand: 9, intervals: [] }],
  intervalMethod: 'none',
  warnings: warnings.map((code) => ({ code, message: code })),
})

// 24 SKUs: garden ones tagged category:garden, heating ones category:heating.
const skus = Array.from({ length: 24 }, (_, i) => (i < 12 ? `GRD-${1000 + i}` : `HTG-${2000 + i}`))
const itemOf = (sku: string, i: number): ResultItem =>
  i % 4 === 3
    ? { sku, frequency: 'month', failure: { code: 'empty-series', message: 'no demand' } }
    : ok(sku, i % 2 === 0 ? 'level-smoothing' : 'theta', i / 8, i % 6 === 0 ? ['short-history'] : [])

beforeAll(async () => {
  h = await buildHistoryApp('http-sku-list-filters')
  for (const [i, sku] of skus.entries()) {
    const put = await h.app.inject({
      method: 'PUT',
      url: `/v1/skus/${sku}/history`,
      headers,
      payload: { frequency: 'month', firstPeriod: '2025-01', demand: [5, 6, 7], tags: [i < 12 ? 'category:garden' : 'category:heating'] },
    })
    expect(put.statusCode).toBe(201)
  }
  const runs = new RunStore(h.redis, { prefix: h.app.config.redisPrefix, resultTtlSeconds: 600, recordTtlSeconds: 1200 })
  const items = skus.map(itemOf)
  const at = new Date('2026-04-01T06:00:00Z')
  await runs.createRun('garden', 'nightly-1', runRequest(syntheticSeries(items.length)), items.length, at)
  expect(await runs.commitChunk('garden', 'nightly-1', 0, prepareItems(items), tallyItems(items, 'mase'), at, true)).toBe('finished')
  await h.redis.zadd(exceptionsKey(h.app.config.redisPrefix, 'garden'), 0, 'GRD-1002', 0, 'HTG-2013', 0, 'HTG-2014', 0, 'HTG-2015')
})
afterAll(() => h?.close())

/** The SKUs of every page of `query`, following nextCursor. */
async function walk(query: string): Promise<string[]> {
  const out: string[] = []
  let cursor = ''
  for (let pages = 0; pages < 50; pages++) {
    const res = await h.app.inject({ url: `/v1/skus?${query}${cursor}`, headers })
    expect(res.statusCode).toBe(200)
    const body = res.json() as { items: { sku: string }[]; nextCursor: string | null }
    out.push(...body.items.map((i) => i.sku))
    if (body.nextCursor === null) return out
    cursor = `&cursor=${body.nextCursor}`
  }
  throw new Error('did not end')
}
const where = (keep: (i: number) => boolean) => skus.filter((_, i) => keep(i))

describe('GET /v1/skus filters', () => {
  it('combine with tag and prefix, and page across the filtered set', async () => {
    const theta = (i: number) => i % 4 !== 3 && i % 2 === 1
    expect(await walk('model=theta&limit=2')).toEqual(where(theta))
    expect(await walk('model=theta&tag=category:heating&limit=2')).toEqual(where((i) => theta(i) && i >= 12))
    expect(await walk('failed=true&prefix=HTG-&limit=1')).toEqual(where((i) => i % 4 === 3 && i >= 12))
    expect(await walk('warning=short-history&limit=3')).toEqual(where((i) => i % 4 !== 3 && i % 6 === 0))
    expect(await walk('minError=1&maxError=2&model=level-smoothing&limit=2')).toEqual(where((i) => i % 2 === 0 && i >= 8 && i <= 16))
    // HTG-2015 is on the exception list but failed in the newest run.
    expect(await walk('exception=true&failed=false&limit=2')).toEqual(['GRD-1002', 'HTG-2013', 'HTG-2014'])
    expect(await walk('exception=false&tag=category:heating&failed=false&model=theta')).toEqual(where((i) => i >= 12 && i % 4 === 1 && i !== 13))
    expect(await walk('exception=true&tag=category:garden')).toEqual(['GRD-1002'])
    expect(await walk('errorMeasure=mape&minError=0')).toEqual([])
  })

  it('sort=error pages by holdout error, largest first, with the filters', async () => {
    const forecast = (i: number) => i % 4 !== 3
    expect(await walk('sort=error&limit=5')).toEqual(where(forecast).reverse())
    expect(await walk('sort=error&tag=category:garden&model=theta&limit=2')).toEqual(where((i) => forecast(i) && i < 12 && i % 2 === 1).reverse())
    expect(await walk('sort=error&errorMeasure=mase&maxError=1&limit=3')).toEqual(where((i) => forecast(i) && i <= 8).reverse())
  })

  it('each item carries its published summary', async () => {
    const body = (await h.app.inject({ url: '/v1/skus?prefix=GRD-100&limit=4', headers })).json()
    expect(body.items.map((i: { sku: string; published: unknown }) => [i.sku, i.published])).toEqual([
      ['GRD-1000', { runId: 'nightly-1', model: 'level-smoothing', warnings: ['short-history'], failed: false, error: { measure: 'mase', value: 0 } }],
      ['GRD-1001', { runId: 'nightly-1', model: 'theta', warnings: [], failed: false, error: { measure: 'mase', value: 0.125 } }],
      ['GRD-1002', { runId: 'nightly-1', model: 'level-smoothing', warnings: [], failed: false, error: { measure: 'mase', value: 0.25 } }],
      ['GRD-1003', { runId: 'nightly-1', model: null, warnings: [], failed: true, error: null }],
    ])
  })

  it('bad values are a 400 naming the field', async () => {
    const cases: [string, string][] = [
      ['model=prophet-like', 'model'],
      ['warning=Short%20History', 'warning'],
      ['failed=yes', 'failed'],
      ['exception=1', 'exception'],
      ['minError=-1', 'minError'],
      ['maxError=lots', 'maxError'],
      ['minError=2&maxError=1', 'minError'],
      ['errorMeasure=mase', 'errorMeasure'],
      ['errorMeasure=accuracy&minError=1', 'errorMeasure'],
      ['sort=model', 'sort'],
    ]
    for (const [query, field] of cases) {
      const res = await h.app.inject({ url: `/v1/skus?${query}`, headers })
      expect(res.statusCode, query).toBe(400)
      expect(res.headers['content-type']).toContain('application/problem+json')
      expect(res.json().errors.map((e: { path: string }) => e.path), query).toContain(field)
    }
    const body = (await h.app.inject({ url: '/v1/skus?minError=2&maxError=1', headers })).json()
    expect(body).toMatchInlineSnapshot(`
      {
        "detail": "The request query string has 1 invalid field",
        "errors": [
          {
            "message": "must not exceed maxError",
            "path": "minError",
          },
        ],
        "status": 400,
        "title": "Validation failed",
        "type": "https://almanac.example/problems/validation-failed",
      }
    `)
  })
})
