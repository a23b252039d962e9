import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createHash } from 'node:crypto'
import type { FastifyInstance } from 'fastify'
import type { RunMachinery } from '../../src/queue/gateway.js'
import { startService, type TestService } from '../helpers/service.js'
import { syntheticSeries, waitFor } from '../queue/fixtures.js'

// The real app, gateway, queue and sandboxed worker against a real Redis.
const sha256 = (s: string) => createHash('sha256').update(s, 'utf8').digest('hex')
const GARDEN = 'garden-integration-key-0123456789'
const HEATING = 'heating-integration-key-0123456789'
const as = (key: string) => ({ authorization: `Bearer ${key}` })

let service: TestService
let app: FastifyInstance
let gateway: RunMachinery

beforeAll(async () => {
  service = await startService('http-runs', {
    config: {
      apiKeys: new Map([
        ['garden', [sha256(GARDEN)]],
        ['heating', [sha256(HEATING)]],
      ]),
      chunkSize: 20,
      workerConcurrency: 1,
    },
    appDeps: ({ redis }) => ({ rateLimitRedis: redis }),
  })
  ;({ app, gateway } = service)
})

afterAll(() => service?.close())

const untilFinished = (id: string, key: string) =>
  waitFor(async () => {
    const run = (await app.inject({ url: `/v1/runs/${id}`, headers: as(key) })).json()
    return run.status === 'queued' || run.status === 'running' ? undefined : run
  }, 90_000, `run ${id} to finish`)

describe('runs over HTTP with the real queue and worker', () => {
  const series = syntheticSeries(45, 36, 'HOSE')
  let runId: string

  beforeAll(async () => {
    const res = await app.inject({
      method: 'POST',
      url: '/v1/runs',
      headers: as(GARDEN),
      payload: { horizon: 6, frequency: 'month', series, publish: true },
    })
    expect(res.statusCode).toBe(202)
    runId = res.json().id
    expect(res.headers.location).toBe(`/v1/runs/${runId}`)
  })

  it('runs to success with every series done', async () => {
    const run = await untilFinished(runId, GARDEN)
    expect(run.status).toBe('succeeded')
    expect(run.progress).toEqual({ total: 45, done: 45, failed: 0 })
    expect(run.summary.rankBy).toBe('mase')
    expect(run.tenant).toBeUndefined()
  })

  it('pages through all results with cursors', async () => {
    const seen: string[] = []
    let cursor: string | null = null
    let pages = 0
    do {
      const q: string = cursor ? `?limit=20&cursor=${encodeURIComponent(cursor)}` : '?limit=20'
      const res = await app.inject({ url: `/v1/runs/${runId}/results${q}`, headers: as(GARDEN) })
      expect(res.statusCode).toBe(200)
      const page = res.json()
      expect(page.items.length).toBeLessThanOrEqual(20)
      for (const item of page.items) {
        expect(item.forecast).toHaveLength(6)
        seen.push(item.sku)
      }
      cursor = page.nextCursor
      pages++
    } while (cursor !== null && pages < 10)
    expect(cursor).toBeNull()
    expect(new Set(seen)).toEqual(new Set(series.map((s) => s.sku)))
  })

  it('serves a page as JSON whose text is the decoded page serialised (application/json, UTF-8)', async () => {
    const res = await app.inject({ url: `/v1/runs/${runId}/results?limit=7`, headers: as(GARDEN) })
    expect(res.statusCode).toBe(200)
    expect(res.headers['content-type']).toBe('application/json; charset=utf-8')
    expect(res.body).toBe(JSON.stringify(await gateway.results('garden', runId, { limit: 7 })))
  })

  it('serves the compact view from the stored text: the full page without each item\'s candidates', async () => {
    const res = await app.inject({ url: `/v1/runs/${runId}/results?limit=7&view=compact`, headers: as(GARDEN) })
    expect(res.statusCode).toBe(200)
    const full = await gateway.results('garden', runId, { limit: 7 })
    const compact = { ...full!, items: full!.items.map((item) => ('failure' in item ? item : (({ candidates: _c, ...rest }) => rest)(item))) }
    expect(res.body).toBe(JSON.stringify(compact))
    expect(res.body).not.toContain('"candidates"')
  })

  it('a tampered cursor is a 400 problem, not a 500', async () => {
    const res = await app.inject({ url: `/v1/runs/${runId}/results?cursor=not.a.cursor`, headers: as(GARDEN) })
    expect(res.statusCode).toBe(400)
    expect(res.json().errors[0].path).toBe('cursor')
  })

  it('serves the latest forecast of a SKU', async () => {
    const res = await app.inject({ url: `/v1/skus/${series[3]!.sku}/forecast`, headers: as(GARDEN) })
    expect(res.statusCode).toBe(200)
    const body = res.json()
    expect(body).toMatchObject({ sku: series[3]!.sku, runId })
    expect(body.forecast).toHaveLength(6)
    expect(Number.isNaN(Date.parse(body.producedAt))).toBe(false)
  })

  it('keeps tenants apart: the other key sees neither the run, its results nor the SKU', async () => {
    for (const path of [`/v1/runs/${runId}`, `/v1/runs/${runId}/results`, `/v1/skus/${series[3]!.sku}/forecast`]) {
      const res = await app.inject({ url: path, headers: as(HEATING) })
      expect(res.statusCode, path).toBe(404)
    }
    const del = await app.inject({ method: 'DELETE', url: `/v1/runs/${runId}`, headers: as(HEATING) })
    expect(del.statusCode).toBe(404)
  })
})

describe('cancel over HTTP', () => {
  it('DELETE cancels a queued run; it stays cancelled', async () => {
    const series = syntheticSeries(400, 48, 'GLOVE')
    const created = await app.inject({ method: 'POST', url: '/v1/runs', headers: as(HEATING), payload: { horizon: 3, series } })
    expect(created.statusCode).toBe(202)
    const id = created.json().id
    const res = await app.inject({ method: 'DELETE', url: `/v1/runs/${id}`, headers: as(HEATING) })
    expect(res.statusCode).toBe(200)
    expect(res.json().status).toBe('cancelled')
    const run = await untilFinished(id, HEATING)
    expect(run.status).toBe('cancelled')
    expect(run.progress.done).toBeLessThan(400)
  })
})

describe('readiness', () => {
  it('GET /readyz is 200 against a live Redis', async () => {
    const res = await app.inject({ url: '/readyz' })
    expect(res.statusCode).toBe(200)
  })
})
