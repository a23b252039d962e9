import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import { build } from '../../../src/http/app.js'
import { createLogger } from '../../../src/logger.js'
import { InMemoryGatewayDouble, KEY_GARDEN, auth, testConfig } from '../gateway-double.js'

describe('problem responses for bad input (never a 500)', () => {
  let app: FastifyInstance
  const lines: string[] = []
  beforeAll(async () => {
    const logger = createLogger({ level: 'info', destination: { write: (s: string) => void lines.push(s) } })
    app = await build({ config: testConfig({ bodyLimitBytes: 2048 }), gateway: new InMemoryGatewayDouble(), logger })
    app.get('/boom', async () => {
      throw new Error('secret database detail')
    })
  })
  afterAll(() => app.close())

  const post = (payload: string, contentType = 'application/json') =>
    app.inject({ method: 'POST', url: '/v1/runs', headers: { ...auth(KEY_GARDEN), 'content-type': contentType }, payload })

  it('malformed JSON is a 400 malformed-json problem', async () => {
    const res = await post('{"horizon": 3, "series": [')
    expect(res.statusCode).toBe(400)
    expect(res.headers['content-type']).toBe('application/problem+json; charset=utf-8')
    expect(res.json()).toMatchInlineSnapshot(`
      {
        "detail": "The request body is not valid JSON",
        "status": 400,
        "title": "Malformed JSON",
        "type": "https://almanac.example/problems/malformed-json",
      }
    `)
  })

  it('an empty JSON body is no body: a 400 where one is needed, fine where not', async () => {
    const res = await post('')
    expect(res.statusCode).toBe(400)
    expect(res.json().errors).toEqual([{ path: 'body', message: 'Invalid input: expected object, received null' }])
    const del = await app.inject({
      method: 'DELETE',
      url: '/v1/runs/run-1',
      headers: { ...auth(KEY_GARDEN), 'content-type': 'application/json' },
      payload: '',
    })
    expect(del.statusCode).toBe(404)
  })

  it('a prototype-poisoning body is malformed-json', async () => {
    const res = await post('{"__proto__": {"admin": true}, "horizon": 1, "series": []}')
    expect(res.statusCode).toBe(400)
    expect(res.json().type).toBe('https://almanac.example/problems/malformed-json')
  })

  it('numbers that overflow to Infinity are rejected by field', async () => {
    const res = await post('{"horizon": 1, "series": [{"sku": "A", "demand": [1e400, 2]}]}')
    expect(res.statusCode).toBe(400)
    expect(res.json().errors).toEqual([{ path: 'series[0].demand[0]', message: 'Invalid input: expected number, received Infinity' }])
  })

  it('a body that is not JSON is 415', async () => {
    const res = await post('horizon=3', 'text/plain')
    expect(res.statusCode).toBe(415)
    expect(res.json()).toMatchInlineSnapshot(`
      {
        "detail": "Send the body as application/json",
        "status": 415,
        "title": "Unsupported media type",
        "type": "https://almanac.example/problems/unsupported-media-type",
      }
    `)
    const form = await post('horizon=3', 'application/x-www-form-urlencoded')
    expect(form.statusCode).toBe(415)
  })

  it('a body over the limit is 413', async () => {
    const big = JSON.stringify({ horizon: 3, series: [{ sku: 'X', demand: Array.from({ length: 1000 }, (_, i) => i) }] })
    expect(big.length).toBeGreaterThan(2048)
    const res = await post(big)
    expect(res.statusCode).toBe(413)
    expect(res.json()).toMatchInlineSnapshot(`
      {
        "detail": "The request body is larger than 2048 bytes",
        "status": 413,
        "title": "Payload too large",
        "type": "https://almanac.example/problems/payload-too-large",
      }
    `)
  })

  it('a JSON body of the wrong type names the body', async () => {
    const res = await post('[1, 2, 3]')
    expect(res.statusCode).toBe(400)
    expect(res.json().errors).toEqual([{ path: 'body', message: 'Invalid input: expected object, received array' }])
  })

  it('lists at most 100 field errors and says how many there were', async () => {
    const values = Array.from({ length: 150 }, () => 'x')
    const res = await post(JSON.stringify({ horizon: 1, series: [{ sku: 'X', demand: values }] }))
    expect(res.statusCode).toBe(400)
    const body = res.json()
    expect(body.errors).toHaveLength(100)
    expect(body.errors[99].path).toBe('series[0].demand[99]')
    // Validation stops once it has more issues than it lists (issue 14, finding 1), so the total is not counted.
    expect(body.detail).toBe('The request body has more than 100 invalid fields; the first 100 are listed')
  })

  it('an unknown route is a 404 problem', async () => {
    const res = await app.inject({ url: '/v2/nothing', headers: auth(KEY_GARDEN) })
    expect(res.statusCode).toBe(404)
    expect(res.json()).toMatchInlineSnapshot(`
      {
        "detail": "No route GET /v2/nothing",
        "status": 404,
        "title": "Not found",
        "type": "https://almanac.example/problems/not-found",
      }
    `)
  })

  it('an unexpected error is a bare 500; the log has the full error', async () => {
    const res = await app.inject({ url: '/boom', headers: auth(KEY_GARDEN) })
    expect(res.statusCode).toBe(500)
    expect(res.body).not.toContain('secret')
    expect(res.json()).toMatchInlineSnapshot(`
      {
        "status": 500,
        "title": "Internal Server Error",
        "type": "https://almanac.example/problems/internal",
      }
    `)
    const logged = lines.map((l) => JSON.parse(l)).find((l) => l.msg === 'request failed')
    expect(logged.err.message).toBe('secret database detail')
    expect(logged.level).toBe(50)
  })
})
