import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import { build } from '../../../src/http/app.js'
import { InMemoryGatewayDouble, KEY_GARDEN, KEY_HEATING, auth, testConfig } from '../gateway-double.js'

const RUN = { horizon: 2, series: [{ sku: 'RAKE', demand: [1, 2, 3] }] }

describe('API keys', () => {
  let app: FastifyInstance
  let gateway: InMemoryGatewayDouble
  beforeAll(async () => {
    gateway = new InMemoryGatewayDouble()
    app = await build({ config: testConfig(), gateway })
  })
  afterAll(() => app.close())

  it('401 with WWW-Authenticate when the header is missing', async () => {
    const res = await app.inject({ method: 'POST', url: '/v1/runs', payload: RUN })
    expect(res.statusCode).toBe(401)
    expect(res.headers['www-authenticate']).toBe('Bearer realm="almanac"')
    expect(res.headers['content-type']).toBe('application/problem+json; charset=utf-8')
    expect(res.json()).toMatchInlineSnapshot(`
      {
        "detail": "Send an API key as Authorization: Bearer <key>",
        "status": 401,
        "title": "Unauthorized",
        "type": "https://almanac.example/problems/unauthorized",
      }
    `)
    expect(gateway.submitted).toHaveLength(0)
  })

  it('401 for an unknown key, a key of another scheme, and an empty bearer', async () => {
    for (const authorization of ['Bearer wrong-key-0123456789abcdef', `Basic ${KEY_GARDEN}`, 'Bearer ', KEY_GARDEN]) {
      const res = await app.inject({ url: '/v1/runs/run-1', headers: { authorization } })
      expect(res.statusCode, authorization).toBe(401)
      expect(res.headers['www-authenticate']).toMatch(/^Bearer/)
    }
    const wrong = await app.inject({ url: '/v1/runs/run-1', headers: auth('wrong-key-0123456789abcdef') })
    expect(wrong.json()).toMatchInlineSnapshot(`
      {
        "detail": "The API key is not valid",
        "status": 401,
        "title": "Unauthorized",
        "type": "https://almanac.example/problems/unauthorized",
      }
    `)
  })

  it('maps each key to its tenant', async () => {
    await app.inject({ method: 'POST', url: '/v1/runs', headers: auth(KEY_GARDEN), payload: RUN })
    await app.inject({ method: 'POST', url: '/v1/runs', headers: auth(KEY_HEATING), payload: RUN })
    expect(gateway.submitted.map((s) => s.tenant)).toEqual(['garden', 'heating'])
  })

  it('accepts the scheme case-insensitively', async () => {
    const res = await app.inject({ url: '/v1/runs/run-1', headers: { authorization: `bearer ${KEY_GARDEN}` } })
    expect(res.statusCode).toBe(200)
  })

  it('health, readiness, metrics and the API docs need no key', async () => {
    for (const url of ['/healthz', '/readyz', '/metrics', '/openapi.json', '/docs']) {
      const res = await app.inject({ url })
      expect(res.statusCode, url).toBeLessThan(400)
    }
  })
})

describe('without configured keys', () => {
  it('every request is tenant "default"', async () => {
    const gateway = new InMemoryGatewayDouble()
    const app = await build({ config: testConfig({ apiKeys: new Map() }), gateway })
    const res = await app.inject({ method: 'POST', url: '/v1/runs', payload: RUN })
    await app.close()
    expect(res.statusCode).toBe(202)
    expect(gateway.submitted[0]!.tenant).toBe('default')
  })
})
