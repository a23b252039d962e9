import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import { build } from '../../../src/http/app.js'
import { InMemoryGatewayDouble, testConfig } from '../gateway-double.js'

describe('health and readiness (no API key needed)', () => {
  let app: FastifyInstance
  let gateway: InMemoryGatewayDouble
  beforeAll(async () => {
    gateway = new InMemoryGatewayDouble()
    app = await build({ config: testConfig({ rateLimitMax: 1 }), gateway })
  })
  afterAll(() => app.close())

  it('GET /healthz answers 200 and is not rate limited', async () => {
    for (let i = 0; i < 3; i++) {
      const res = await app.inject({ url: '/healthz' })
      expect(res.statusCode).toBe(200)
      expect(res.json()).toEqual({ status: 'ok' })
    }
  })

  it('GET /readyz is 200 when the gateway answers ping', async () => {
    gateway.pingError = null
    const res = await app.inject({ url: '/readyz' })
    expect(res.statusCode).toBe(200)
    expect(res.json()).toEqual({ status: 'ready' })
  })

  it('GET /readyz is a 503 problem when ping throws, without the underlying error', async () => {
    gateway.pingError = new Error('connect ECONNREFUSED 127.0.0.1:6379')
    const res = await app.inject({ url: '/readyz' })
    gateway.pingError = null
    expect(res.statusCode).toBe(503)
    expect(res.headers['content-type']).toBe('application/problem+json; charset=utf-8')
    expect(res.body).not.toContain('ECONNREFUSED')
    expect(res.json()).toMatchInlineSnapshot(`
      {
        "detail": "The run store or queue is not reachable",
        "status": 503,
        "title": "Service not ready",
        "type": "https://almanac.example/problems/not-ready",
      }
    `)
  })
})
