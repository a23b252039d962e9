import { readFileSync } from 'node:fs'
import { Ajv2020, type ValidateFunction } from 'ajv/dist/2020.js'
import addFormats from 'ajv-formats'
import createClient, { type Middleware } from 'openapi-fetch'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { HistoryStore } from '../../src/storage/histories/history-store.js'
import type { components, paths } from '../client/almanac-api.js'
import { startService, type TestService } from '../helpers/service.js'
import { waitFor } from '../queue/fixtures.js'

/**
 * The README's walk-through, step by step, through a client generated from
 * openapi/openapi.json (openapi-typescript types, openapi-fetch calls; both
 * from npm) against a listening service with a real Redis and real workers.
 * `npm run build` type-checks these calls against the document, and every
 * answer is checked against the document's schema for its route, status and
 * media type (ajv, JSON Schema 2020-12 as OpenAPI 3.1 uses): a field the
 * document names differently, a status or a route it leaves out, fails here.
 */

const doc = JSON.parse(readFileSync(new URL('../../openapi/openapi.json', import.meta.url), 'utf8'))
const ajv = new Ajv2020({ strict: false, allErrors: true })
addFormats.default(ajv)
const validators = new Map<string, ValidateFunction>()
const checked: string[] = []

/** Fails the call when the answer is not one the document describes. */
const conformance: Middleware = {
  async onResponse({ request, response, schemaPath }) {
    const method = request.method.toLowerCase()
    const status = String(response.status)
    const declared = doc.paths[schemaPath]?.[method]?.responses?.[status]
    if (!declared) throw new Error(`${method} ${schemaPath}: status ${status} is not in the document`)
    const type = (response.headers.get('content-type') ?? '').split(';')[0]!.trim()
    if (!type) return undefined
    const media = declared.content?.[type]
    if (!media) throw new Error(`${method} ${schemaPath} ${status}: ${type} is not in the document`)
    const key = `${method} ${schemaPath} ${status} ${type}`
    let validate = validators.get(key)
    if (!validate) {
      // The response schema with the document's components beside it, so its $refs resolve.
      validate = ajv.compile({ ...media.schema, components: doc.components })
      validators.set(key, validate)
    }
    const body = await response.clone().text()
    const value = type.endsWith('json') ? JSON.parse(body) : body
    if (!validate(value)) throw new Error(`${key}: ${ajv.errorsText(validate.errors)}`)
    checked.push(key)
    return undefined
  },
}

type RunRequest = components['schemas']['RunRequestInput']
const demo = (name: string) => JSON.parse(readFileSync(new URL(`../../demo/${name}`, import.meta.url), 'utf8')) as RunRequest

let service: TestService
let client: ReturnType<typeof createClient<paths>>

beforeAll(async () => {
  service = await startService('client-walkthrough', {
    config: { chunkSize: 50, workerConcurrency: 2 },
    appDeps: ({ redis, prefix }) => ({ histories: new HistoryStore(redis, { prefix }) }),
  })
  const address = await service.app.listen({ port: 0, host: '127.0.0.1' })
  client = createClient<paths>({ baseUrl: address })
  client.use(conformance)
}, 60_000)

afterAll(() => service?.close())

/** A results page: the route's 200 is a JSON page, or CSV text when asked for. */
function page<T>(data: T | string | undefined): T {
  if (data === undefined || typeof data === 'string') throw new Error('expected a JSON page')
  return data
}

async function finished(runId: string) {
  return waitFor(
    async () => {
      const { data } = await client.GET('/v1/runs/{runId}', { params: { path: { runId } } })
      return data && data.status !== 'queued' && data.status !== 'running' ? data : undefined
    },
    120_000,
    `run ${runId}`,
  )
}

describe('the README walk-through through a generated client', () => {
  let runId = ''

  it('forecasts four SKUs at once', async () => {
    const { data, response } = await client.POST('/v1/forecast', { body: demo('small-request.json') })
    expect(response.status).toBe(200)
    expect(data!.items).toHaveLength(4)
    for (const item of data!.items) {
      if ('failure' in item) throw new Error(`${item.sku} failed: ${item.failure.message}`)
      expect(item.holdoutErrors?.mase).toEqual(expect.any(Number))
      expect(item.forecast[0]!.intervals.map((i) => i.level)).toEqual([80, 95])
    }
  })

  it('queues a run of 300 SKUs, polls it and pages through the results', async () => {
    const { data, response } = await client.POST('/v1/runs', { body: { ...demo('run-request.json'), publish: true } })
    expect(response.status).toBe(202)
    runId = data!.id
    expect(response.headers.get('location')).toBe(`/v1/runs/${runId}`)
    const run = await finished(runId)
    expect(run.status).toBe('succeeded')
    expect(run.progress).toEqual({ total: 300, done: 300, failed: 0 })
    expect(Object.values(run.summary!.modelCounts).reduce((a, b) => a + (b ?? 0), 0)).toBe(300)

    const first = page((await client.GET('/v1/runs/{runId}/results', { params: { path: { runId }, query: { limit: 2 } } })).data)
    expect(first.items).toHaveLength(2)
    const second = page(
      (await client.GET('/v1/runs/{runId}/results', { params: { path: { runId }, query: { limit: 2, cursor: first.nextCursor! } } })).data,
    )
    expect(second.items[0]!.sku > first.items[1]!.sku).toBe(true)

    const one = page((await client.GET('/v1/runs/{runId}/results', { params: { path: { runId }, query: { sku: 'HTG-2001' } } })).data)
    const item = one.items[0]!
    if ('failure' in item) throw new Error(item.failure.message)
    expect(item.candidates![0]!.model).toBe(item.model)

    const compact = page((await client.GET('/v1/runs/{runId}/results', { params: { path: { runId }, query: { limit: 2, view: 'compact' } } })).data)
    expect(compact.items.every((i) => !('candidates' in i))).toBe(true)
  })

  it('reads the latest forecast of one SKU, and a 304 for an unchanged ETag', async () => {
    const { data, response } = await client.GET('/v1/skus/{sku}/forecast', { params: { path: { sku: 'HTG-2001' } } })
    expect(data!.runId).toBe(runId)
    const etag = response.headers.get('etag')!
    const again = await client.GET('/v1/skus/{sku}/forecast', { params: { path: { sku: 'HTG-2001' }, header: { 'If-None-Match': etag } } })
    expect(again.response.status).toBe(304)
  })

  it('exports the whole run as CSV', async () => {
    const { data, response } = await client.GET('/v1/runs/{runId}/results', {
      params: { path: { runId } },
      headers: { accept: 'text/csv' },
      parseAs: 'text',
    })
    expect(response.headers.get('content-type')).toMatch(/^text\/csv/)
    const lines = (data as unknown as string).trimEnd().split('\r\n')
    expect(lines[0]).toBe('sku,period,demand,low80,high80,low95,high95,model,rankBy,holdoutError,failure')
    expect(lines).toHaveLength(1 + 300 * 6)
  })

  it('adds safety stock and a reorder point for a 2-month lead time at 95% service', async () => {
    const body: RunRequest = { ...demo('small-request.json'), replenishment: { leadTimePeriods: 2, serviceLevel: 0.95 } }
    const { data } = await client.POST('/v1/forecast', { body })
    const item = data!.items[0]!
    if ('failure' in item) throw new Error(item.failure.message)
    expect(item.replenishment!.leadTimePeriods).toBe(2)
    expect(item.replenishment!.reorderPoint).toBeGreaterThanOrEqual(item.replenishment!.safetyStock!)
  })

  it('stores histories from CSV and one PUT, then reforecasts them by tag', async () => {
    const upload = await client.POST('/v1/history', {
      params: { query: { frequency: 'month', mode: 'overwrite' } },
      body: 'sku,period,demand\nGRD-1001,2026-01-05,12\nGRD-1001,2026-01-19,7\n' as never,
      bodySerializer: (b) => b as string,
      headers: { 'content-type': 'text/csv' },
    })
    expect(upload.data).toMatchObject({ rows: { accepted: 2, rejected: 0 }, skus: { created: 1, updated: 0, rejected: 0 } })

    const demand = [12, 15, 14, 18, 22, 30, 34, 31, 24, 17, 13, 11, 14, 16, 15, 20, 25, 33, 36, 33, 26, 18, 14, 12]
    const put = await client.PUT('/v1/skus/{sku}/history', {
      params: { path: { sku: 'GRD-9001' } },
      body: { frequency: 'month', firstPeriod: '2024-01', demand, tags: ['category:garden'] },
    })
    expect(put.response.status).toBe(201)
    expect(put.response.headers.get('location')).toBe('/v1/skus/GRD-9001/history')
    expect(put.data).toMatchObject({ firstPeriod: '2024-01', lastPeriod: '2025-12', periodCount: 24 })

    const listed = await client.GET('/v1/skus', { params: { query: { tag: 'category:garden' } } })
    expect(listed.data!.items.map((s) => s.sku)).toEqual(['GRD-9001'])

    const submitted = await client.POST('/v1/runs', { body: { horizon: 3, scope: { tags: ['category:garden'] } } })
    expect(submitted.response.status).toBe(202)
    const run = await finished(submitted.data!.id)
    expect(run).toMatchObject({ status: 'succeeded', scope: { tags: ['category:garden'] }, progress: { total: 1, done: 1, failed: 0 } })
  })

  it('gets a problem naming the field for a body the document does not allow', async () => {
    const { error, response } = await client.POST('/v1/runs', { body: { horizon: 3, scope: { all: true }, colour: 'green' } as never })
    expect(response.status).toBe(400)
    expect(response.headers.get('content-type')).toMatch(/^application\/problem\+json/)
    const problem = error as unknown as components['schemas']['Problem']
    expect(problem.errors).toEqual([expect.objectContaining({ path: 'colour' })])
  })
})

it('checked each answer above against the document', () => {
  expect(new Set(checked)).toEqual(
    new Set([
      'post /v1/forecast 200 application/json',
      'post /v1/runs 202 application/json',
      'post /v1/runs 400 application/problem+json',
      'get /v1/runs/{runId} 200 application/json',
      'get /v1/runs/{runId}/results 200 application/json',
      'get /v1/runs/{runId}/results 200 text/csv',
      'get /v1/skus/{sku}/forecast 200 application/json',
      'post /v1/history 200 application/json',
      'put /v1/skus/{sku}/history 201 application/json',
      'get /v1/skus 200 application/json',
    ]),
  )
})
