import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import { build } from '../../../../src/http/app.js'
import { InMemoryGatewayDouble, KEY_GARDEN, KEY_HEATING, auth, forecastItemFixture, testConfig } from '../../gateway-double.js'

describe('GET /v1/runs/{runId}/results', () => {
  let app: FastifyInstance
  let gateway: InMemoryGatewayDouble
  let runId: string
  beforeAll(async () => {
    gateway = new InMemoryGatewayDouble()
    app = await build({ config: testConfig(), gateway })
    const run = await gateway.submit('garden', { ...minimalSettings(), series: [] })
    runId = run.id
    gateway.complete(runId, [
      forecastItemFixture('A'),
      forecastItemFixture('B'),
      { sku: 'C', frequency: 'month', failure: { code: 'series-too-short', message: 'trend-smoothing needs 4 periods, has 3' } },
    ])
  })
  afterAll(() => app.close())

  const get = (query: string, key = KEY_GARDEN) => app.inject({ url: `/v1/runs/${runId}/results${query}`, headers: auth(key) })

  it('pages with limit and cursor until nextCursor is null', async () => {
    const first = await get('?limit=2')
    expect(first.statusCode).toBe(200)
    const p1 = first.json()
    expect(p1.items.map((i: { sku: string }) => i.sku)).toEqual(['A', 'B'])
    expect(typeof p1.nextCursor).toBe('string')
    const p2 = (await get(`?limit=2&cursor=${p1.nextCursor}`)).json()
    expect(p2.items).toEqual([{ sku: 'C', frequency: 'month', failure: { code: 'series-too-short', message: 'trend-smoothing needs 4 periods, has 3' } }])
    expect(p2.nextCursor).toBeNull()
  })

  it('defaults to 100 items and returns full forecast items', async () => {
    const page = (await get('')).json()
    expect(page.items).toHaveLength(3)
    expect(page.items[0]).toEqual(forecastItemFixture('A'))
  })

  it('?view=compact leaves out candidates and nothing else', async () => {
    const page = (await get('?view=compact')).json()
    const { candidates: _c, ...rest } = forecastItemFixture('A') as ReturnType<typeof forecastItemFixture> & { candidates: unknown }
    expect(page.items[0]).toEqual(rest)
    expect(page.items[2]).toEqual({ sku: 'C', frequency: 'month', failure: { code: 'series-too-short', message: 'trend-smoothing needs 4 periods, has 3' } })
    expect((await get('?view=everything')).statusCode).toBe(400)
  })

  it('filters by sku', async () => {
    const page = (await get('?sku=B')).json()
    expect(page.items.map((i: { sku: string }) => i.sku)).toEqual(['B'])
  })

  it.each([
    ['?limit=0', 'limit'],
    ['?limit=1001', 'limit'],
    ['?limit=abc', 'limit'],
    ['?cursor=%00%01', 'cursor'],
  ])('rejects %s with a 400 naming %s', async (query, field) => {
    const res = await get(query)
    expect(res.statusCode).toBe(400)
    expect(res.json().errors[0].path).toBe(field)
  })

  it('a cursor the machinery does not recognise is a 400, not a 500', async () => {
    const res = await get('?cursor=not-a-cursor')
    expect(res.statusCode).toBe(400)
    expect(res.json()).toMatchInlineSnapshot(`
      {
        "detail": "cursor is not one this service issued",
        "errors": [
          {
            "message": "cursor is not one this service issued",
            "path": "cursor",
          },
        ],
        "status": 400,
        "title": "Validation failed",
        "type": "https://almanac.example/problems/validation-failed",
      }
    `)
  })

  it('another tenant gets 404', async () => {
    const res = await get('', KEY_HEATING)
    expect(res.statusCode).toBe(404)
    expect(res.json().type).toBe('https://almanac.example/problems/not-found')
  })
})

function minimalSettings() {
  return {
    horizon: 3,
    frequency: 'month' as const,
    rankBy: 'mase' as const,
    intervalLevels: [80, 95],
    missingPeriods: 'zero' as const,
    allowNegativeDemand: false,
    keepLeadingZeros: false,
    holdoutOrigins: 1,
  }
}
