import { describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import { afterAll, beforeAll } from 'vitest'
import { build } from '../../src/http/app.js'
import { validatorCompiler } from '../../src/http/validation.js'
import { RunSubmission } from '../../src/schemas/run.js'
import { InMemoryGatewayDouble, KEY_GARDEN, auth, testConfig } from './gateway-double.js'

// Issue 14, finding 1: validation collected every issue of a huge invalid body before cutting the answer to 100.
describe('request validation stops after the issues it reports', () => {
  it('never reads the body past them (seen failing before the fix: the trap was read)', () => {
    const series = Array.from({ length: 2000 }, (_, i) => ({ sku: `S${i}`, demand: Array.from({ length: 24 }, () => 'x') }))
    Object.defineProperty(series, 1500, {
      get() {
        throw new Error('read past the reported issues')
      },
    })
    const validate = validatorCompiler({ schema: RunSubmission, method: 'POST', url: '/v1/runs', httpPart: 'body' })
    const out = validate({ horizon: 3, series }) as { error?: unknown[] }
    expect(out.error).toHaveLength(100)
  })

  describe('over HTTP', () => {
    let app: FastifyInstance
    beforeAll(async () => {
      app = await build({ config: testConfig(), gateway: new InMemoryGatewayDouble() })
    })
    afterAll(() => app.close())

    it('answers a body of 20,000 bad values with the first 100 and says there are more', async () => {
      const series = Array.from({ length: 1000 }, (_, i) => ({ sku: `S${i}`, demand: Array.from({ length: 20 }, () => 'x') }))
      const res = await app.inject({ method: 'POST', url: '/v1/runs', headers: auth(KEY_GARDEN), payload: { horizon: 3, series } })
      expect(res.statusCode).toBe(400)
      const body = res.json()
      expect(body.detail).toBe('The request body has more than 100 invalid fields; the first 100 are listed')
      expect(body.errors).toHaveLength(100)
      expect(body.errors[0]).toEqual({ path: 'series[0].demand[0]', message: 'Invalid input: expected number, received string' })
    })
  })
})
