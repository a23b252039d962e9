import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import { build } from '../../../../src/http/app.js'
import { InMemoryGatewayDouble, KEY_GARDEN, KEY_HEATING, auth, testConfig } from '../../gateway-double.js'

const REQUEST = {
  horizon: 6,
  frequency: 'month',
  series: [
    { sku: 'HOSE-25M', demand: [4, 6, 5, 7, 8, 6] },
    { sku: 'GLOVE-L', demand: [12, 10, 11, 13, 12, 14], frequency: 'week' },
  ],
}

describe('/v1/runs', () => {
  let app: FastifyInstance
  let gateway: InMemoryGatewayDouble
  beforeAll(async () => {
    gateway = new InMemoryGatewayDouble()
    app = await build({ config: testConfig(), gateway })
  })
  afterAll(() => app.close())

  it('POST refuses fields it does not know, naming each, at any depth (old names included)', async () => {
    const before = gateway.submitted.length
    const res = await app.inject({
      method: 'POST',
      url: '/v1/runs',
      headers: auth(KEY_GARDEN),
      payload: { horizon: 3, metric: 'mase', series: [{ sku: 'A', demand: [1, 2], start: '2024-01' }], replenishment: { leadTime: 2, serviceLevel: 0.9 } },
    })
    expect(res.statusCode).toBe(400)
    expect(res.json().errors).toEqual(
      expect.arrayContaining([
        { path: 'metric', message: 'is not a field of this request' },
        { path: 'series[0].start', message: 'is not a field of this request' },
        { path: 'replenishment.leadTime', message: 'is not a field of this request' },
      ]),
    )
    expect(gateway.submitted).toHaveLength(before)
  })

  it('POST queues a run: 202, Location, the run without its tenant, defaults applied', async () => {
    const res = await app.inject({ method: 'POST', url: '/v1/runs', headers: auth(KEY_GARDEN), payload: REQUEST })
    expect(res.statusCode).toBe(202)
    const run = res.json()
    expect(res.headers.location).toBe(`/v1/runs/${run.id}`)
    expect(run.tenant).toBeUndefined()
    expect(run).toMatchObject({ status: 'queued', progress: { total: 2, done: 0, failed: 0 }, finishedAt: null })
    expect(run.scope).toBeNull()
    expect(run.failure).toBeNull()
    expect(run.settings).toEqual({
      horizon: 6,
      frequency: 'month',
      rankBy: 'mase',
      intervalLevels: [80, 95],
      missingPeriods: 'zero',
      allowNegativeDemand: false,
      keepLeadingZeros: false,
    })
    const sent = gateway.submitted.at(-1)!
    expect(sent.tenant).toBe('garden')
    expect(sent.request.series[1]).toEqual({ sku: 'GLOVE-L', demand: [12, 10, 11, 13, 12, 14], frequency: 'week' })
  })

  it('GET returns the run to its tenant and 404 to another tenant', async () => {
    const created = (await app.inject({ method: 'POST', url: '/v1/runs', headers: auth(KEY_GARDEN), payload: REQUEST })).json()
    const own = await app.inject({ url: `/v1/runs/${created.id}`, headers: auth(KEY_GARDEN) })
    expect(own.statusCode).toBe(200)
    expect(own.json()).toEqual(created)

    const other = await app.inject({ url: `/v1/runs/${created.id}`, headers: auth(KEY_HEATING) })
    expect(other.statusCode).toBe(404)
    expect(other.headers['content-type']).toBe('application/problem+json; charset=utf-8')
    expect(other.json()).toEqual({
      type: 'https://almanac.example/problems/not-found',
      title: 'Not found',
      status: 404,
      detail: `Run ${created.id} not found`,
    })
  })

  it('GET of an unknown run is a 404 problem', async () => {
    const res = await app.inject({ url: '/v1/runs/run-999', headers: auth(KEY_GARDEN) })
    expect(res.statusCode).toBe(404)
    expect(res.json()).toMatchInlineSnapshot(`
      {
        "detail": "Run run-999 not found",
        "status": 404,
        "title": "Not found",
        "type": "https://almanac.example/problems/not-found",
      }
    `)
  })

  it('rejects a malformed run id with a 400 naming the path parameter', async () => {
    const res = await app.inject({ url: '/v1/runs/bad%20id!', headers: auth(KEY_GARDEN) })
    expect(res.statusCode).toBe(400)
    expect(res.json()).toMatchInlineSnapshot(`
      {
        "detail": "The request path has 1 invalid field",
        "errors": [
          {
            "message": "must contain only letters, digits, - and _",
            "path": "runId",
          },
        ],
        "status": 400,
        "title": "Validation failed",
        "type": "https://almanac.example/problems/validation-failed",
      }
    `)
  })

  it('DELETE cancels a queued run (200 with the run); another tenant gets 404 and the run is untouched', async () => {
    const created = (await app.inject({ method: 'POST', url: '/v1/runs', headers: auth(KEY_GARDEN), payload: REQUEST })).json()
    const other = await app.inject({ method: 'DELETE', url: `/v1/runs/${created.id}`, headers: auth(KEY_HEATING) })
    expect(other.statusCode).toBe(404)
    expect(gateway.runs.get(created.id)!.status).toBe('queued')

    const res = await app.inject({ method: 'DELETE', url: `/v1/runs/${created.id}`, headers: auth(KEY_GARDEN) })
    expect(res.statusCode).toBe(200)
    expect(res.json()).toMatchObject({ id: created.id, status: 'cancelled' })
  })

  it('a run with a duplicate SKU is refused by the machinery as a 400 with the field', async () => {
    const dup = new InMemoryGatewayDouble()
    const { RunInputError } = await import('../../../../src/runs/input.js')
    dup.submit = async () => {
      throw new RunInputError('duplicate-sku', 'SKU HOSE-25M appears twice', 'series[1].sku')
    }
    const local = await build({ config: testConfig(), gateway: dup })
    const res = await local.inject({ method: 'POST', url: '/v1/runs', headers: auth(KEY_GARDEN), payload: REQUEST })
    await local.close()
    expect(res.statusCode).toBe(400)
    expect(res.json()).toMatchInlineSnapshot(`
      {
        "detail": "SKU HOSE-25M appears twice",
        "errors": [
          {
            "message": "SKU HOSE-25M appears twice",
            "path": "series[1].sku",
          },
        ],
        "status": 400,
        "title": "Validation failed",
        "type": "https://almanac.example/problems/validation-failed",
      }
    `)
  })

  it('POST without series is a validation failure', async () => {
    const res = await app.inject({ method: 'POST', url: '/v1/runs', headers: auth(KEY_GARDEN), payload: { horizon: 3 } })
    expect(res.statusCode).toBe(400)
    expect(res.json().errors).toEqual([{ path: 'series', message: 'give series, or stored histories with scope' }])
  })
})
