import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import { build } from '../../../../src/http/app.js'
import { InMemoryGatewayDouble, KEY_GARDEN, KEY_HEATING, auth, testConfig } from '../../gateway-double.js'

const inline = (sku: string) => ({ horizon: 3, series: [{ sku, demand: [4, 6, 5, 7] }] })

describe('GET /v1/runs', () => {
  let app: FastifyInstance
  let gateway: InMemoryGatewayDouble
  beforeAll(async () => {
    gateway = new InMemoryGatewayDouble()
    app = await build({ config: testConfig(), gateway })
    for (const sku of ['HOSE-25M', 'GLOVE-L', 'LOG-BASKET']) {
      await app.inject({ method: 'POST', url: '/v1/runs', headers: auth(KEY_GARDEN), payload: inline(sku) })
    }
    await app.inject({ method: 'POST', url: '/v1/runs', headers: auth(KEY_HEATING), payload: inline('RADIATOR-600') })
  })
  afterAll(() => app.close())

  it("answers a page of the tenant's runs in the shape of GET /v1/runs/{runId}, origin included", async () => {
    const res = await app.inject({ url: '/v1/runs?limit=2', headers: auth(KEY_GARDEN) })
    expect(res.statusCode).toBe(200)
    const body = res.json()
    expect(body.items.map((r: { id: string }) => r.id)).toEqual(['run-3', 'run-2'])
    const one = await app.inject({ url: '/v1/runs/run-3', headers: auth(KEY_GARDEN) })
    expect(body.items[0]).toEqual(one.json())
    expect(body.items[0].origin).toEqual({ kind: 'inline' })
    expect(body.items[0]).not.toHaveProperty('tenant')
    const next = await app.inject({ url: `/v1/runs?limit=2&cursor=${body.nextCursor}`, headers: auth(KEY_GARDEN) })
    expect(next.json()).toMatchObject({ items: [{ id: 'run-1' }], nextCursor: null })
  })

  it('passes the filters on, creation times as instants', async () => {
    const q = 'status=queued&origin=schedule&scheduleId=s-1&createdFrom=2026-03-01T00:00:00Z&createdTo=2026-03-02T01:00:00%2B01:00'
    const res = await app.inject({ url: `/v1/runs?${q}`, headers: auth(KEY_HEATING) })
    expect(res.statusCode).toBe(200)
    expect(gateway.listed.at(-1)).toEqual({
      tenant: 'heating',
      filter: {
        status: 'queued',
        origin: 'schedule',
        scheduleId: 's-1',
        createdFromMs: Date.parse('2026-03-01T00:00:00Z'),
        createdToMs: Date.parse('2026-03-02T00:00:00Z'),
      },
    })
  })

  it('refuses bad filters with a 400 naming each field', async () => {
    const res = await app.inject({
      url: '/v1/runs?status=sleeping&origin=upload&createdFrom=yesterday&limit=5000',
      headers: auth(KEY_GARDEN),
    })
    expect(res.statusCode).toBe(400)
    expect(res.headers['content-type']).toMatch(/application\/problem\+json/)
    expect(res.json().errors.map((e: { path: string }) => e.path).sort()).toEqual(['createdFrom', 'limit', 'origin', 'status'])
    const order = await app.inject({ url: '/v1/runs?createdFrom=2026-03-02T00:00:00Z&createdTo=2026-03-01T00:00:00Z', headers: auth(KEY_GARDEN) })
    expect(order.statusCode).toBe(400)
    expect(order.json().errors).toEqual([{ path: 'createdTo', message: 'must be later than createdFrom' }])
    const kind = await app.inject({ url: '/v1/runs?origin=inline&scheduleId=s-1', headers: auth(KEY_GARDEN) })
    expect(kind.json().errors).toEqual([{ path: 'scheduleId', message: 'only runs of origin schedule have one (origin is inline)' }])
  })
})
