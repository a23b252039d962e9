import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { gunzipSync } from 'node:zlib'
import type { FastifyInstance } from 'fastify'
import { build } from '../../../../src/http/app.js'
import { InMemoryGatewayDouble, KEY_GARDEN, KEY_HEATING, auth, forecastItemFixture, testConfig } from '../../gateway-double.js'

describe('GET /v1/forecasts/published', () => {
  let app: FastifyInstance
  beforeAll(async () => {
    const gateway = new InMemoryGatewayDouble()
    app = await build({ config: testConfig(), gateway })
    const run = await app.inject({ method: 'POST', url: '/v1/runs', headers: auth(KEY_GARDEN), payload: { horizon: 1, series: [{ sku: 'HOSE-25M', demand: [4, 6] }] } })
    gateway.complete(run.json().id, [forecastItemFixture('HOSE-25M'), forecastItemFixture('-GLOVE-L')])
  })
  afterAll(() => app.close())

  it("streams the tenant's published forecasts as NDJSON by default, CSV when asked", async () => {
    const nd = await app.inject({ url: '/v1/forecasts/published', headers: auth(KEY_GARDEN) })
    expect(nd.statusCode).toBe(200)
    expect(nd.headers['content-type']).toBe('application/x-ndjson; charset=utf-8')
    expect(nd.headers.vary).toMatch(/accept/i)
    const rows = nd.body.trim().split('\n').map((l) => JSON.parse(l))
    expect(rows.map((r) => [r.sku, r.period, r.demand, r.finalDemand, r.adjustment])).toEqual([
      ['HOSE-25M', '2026-01', 10, 10, null],
      ['-GLOVE-L', '2026-01', 10, 10, null],
    ])
    const csv = await app.inject({ url: '/v1/forecasts/published?intervalLevels=95', headers: { ...auth(KEY_GARDEN), accept: 'text/csv' } })
    expect(csv.headers['content-type']).toBe('text/csv; charset=utf-8')
    const lines = csv.body.split('\r\n')
    expect(lines[0]!.startsWith('sku,frequency,period,demand,setDemand,changePercent,finalDemand,low95,high95,model,runId,producedAt,')).toBe(true)
    expect(lines[2]!.startsWith("'-GLOVE-L,month,2026-01,10,,,10,7,13,last-value,run-1,")).toBe(true)
    // Another tenant sees none of them.
    expect((await app.inject({ url: '/v1/forecasts/published', headers: auth(KEY_HEATING) })).body).toBe('')
  })

  it('takes the CSV dialect of the results export, refuses a comma delimiter with a decimal comma, and streams gzip', async () => {
    const euro = await app.inject({
      url: '/v1/forecasts/published?intervalLevels=95&delimiter=semicolon&decimalSeparator=comma',
      headers: { ...auth(KEY_GARDEN), accept: 'text/csv' },
    })
    expect(euro.statusCode).toBe(200)
    const lines = euro.body.split('\r\n')
    expect(lines[0]!.startsWith('sku;frequency;period;demand;')).toBe(true)
    expect(lines[1]!.startsWith('HOSE-25M;month;2026-01;10;;;10;7;13;last-value;run-1;')).toBe(true)
    const bad = await app.inject({ url: '/v1/forecasts/published?decimalSeparator=comma', headers: { ...auth(KEY_GARDEN), accept: 'text/csv' } })
    expect(bad.statusCode).toBe(400)
    expect(bad.json().errors[0].path).toBe('decimalSeparator')
    const zipped = await app.inject({ url: '/v1/forecasts/published', headers: { ...auth(KEY_GARDEN), 'accept-encoding': 'gzip' } })
    expect(zipped.headers['content-encoding']).toBe('gzip')
    expect(gunzipSync(zipped.rawPayload).toString('utf8').trim().split('\n')).toHaveLength(2)
  })

  it('refuses bad filters naming each field; a tag needs the history store (503 without)', async () => {
    const bad = await app.inject({ url: '/v1/forecasts/published?frequency=fortnight&intervalLevels=0,95&tag=%20x', headers: auth(KEY_GARDEN) })
    expect(bad.statusCode).toBe(400)
    expect(bad.json().errors.map((e: { path: string }) => e.path).sort()).toEqual(['frequency', 'intervalLevels', 'tag'])
    const tagged = await app.inject({ url: '/v1/forecasts/published?tag=category:garden', headers: auth(KEY_GARDEN) })
    expect(tagged.statusCode).toBe(503)
  })
})
