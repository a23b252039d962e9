import { describe, expect, it } from 'vitest'
import { build } from '../../src/http/app.js'
import { InMemoryGatewayDouble } from '../http/gateway-double.js'
import { runsTestConfig } from '../queue/fixtures.js'

// Without the ERP services (no Redis for them) the routes answer 503, never crash.
describe('ERP routes without their services', () => {
  it.each([
    ['GET', '/v1/callbacks'],
    ['POST', '/v1/callbacks/secret'],
    ['GET', '/v1/schedules'],
    ['GET', '/v1/skus/RAKE/accuracy'],
    ['GET', '/v1/accuracy/exceptions'],
  ] as const)('%s %s -> 503 not-ready', async (method, url) => {
    const app = await build({ config: runsTestConfig('redis://127.0.0.1:1', 'unused'), gateway: new InMemoryGatewayDouble() })
    try {
      const res = await app.inject({ method, url })
      expect(res.statusCode).toBe(503)
      expect(res.json()).toMatchInlineSnapshot(`
        {
          "detail": "Schedules, callbacks and accuracy are not configured on this server",
          "status": 503,
          "title": "Service not ready",
          "type": "https://almanac.example/problems/not-ready",
        }
      `)
    } finally {
      await app.close()
    }
  })
})
