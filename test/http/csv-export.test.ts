import fc from 'fast-check'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { parse } from 'csv-parse/sync'
import { gunzipSync } from 'node:zlib'
import type { FastifyInstance } from 'fastify'
import { build } from '../../src/http/app.js'
import { prefersCsv, textCell } from '../../src/http/csv-export.js'
import type { ResultItem } from '../../src/runs/contract.js'
import { InMemoryGatewayDouble, KEY_GARDEN, KEY_HEATING, auth, forecastItemFixture, testConfig } from './gateway-double.js'

const REQUEST = { horizon: 2, frequency: 'month', series: [{ sku: 'X', demand: [1, 2, 3] }] }

function items(): ResultItem[] {
  const base = forecastItemFixture('HOSE-25M') as Extract<ResultItem, { model: string }>
  const two = {
    ...base,
    forecast: [
      { period: '2026-01', demand: 10.25, intervals: [{ level: 80, low: 8, high: 12 }, { level: 95, low: 7, high: 13 }] },
      { period: '2026-02', demand: -3.5, intervals: [{ level: 80, low: -6, high: -1 }, { level: 95, low: -7.125, high: 0 }] },
    ],
  }
  return [
    two,
    { ...base, sku: '=HYPERLINK("http://x.example","click")' },
    { sku: '-SHOVEL, "steel"', frequency: 'month', failure: { code: 'series-too-short', message: 'level-smoothing needs 2 periods, has 1' } },
  ]
}

describe('GET /v1/runs/{runId}/results as CSV', () => {
  let app: FastifyInstance
  let gateway: InMemoryGatewayDouble
  let runId: string
  beforeAll(async () => {
    gateway = new InMemoryGatewayDouble()
    app = await build({ config: testConfig(), gateway })
    runId = (await app.inject({ method: 'POST', url: '/v1/runs', headers: auth(KEY_GARDEN), payload: REQUEST })).json().id
    gateway.complete(runId, items())
  })
  afterAll(() => app.close())

  const csv = (query = '', key = KEY_GARDEN) =>
    app.inject({ url: `/v1/runs/${runId}/results${query}`, headers: { ...auth(key), accept: 'text/csv' } })

  it('round-trips: parsed back, the values equal the JSON results', async () => {
    const res = await csv()
    expect(res.statusCode).toBe(200)
    expect(res.headers['content-type']).toBe('text/csv; charset=utf-8')
    expect(res.headers.vary).toBe('accept, Accept-Encoding')
    const rows = parse(res.body, { columns: true }) as Record<string, string>[]
    expect(Object.keys(rows[0]!)).toEqual([
      'sku', 'period', 'demand', 'low80', 'high80', 'low95', 'high95', 'model', 'rankBy', 'holdoutError', 'failure',
    ])
    const json = (await app.inject({ url: `/v1/runs/${runId}/results`, headers: auth(KEY_GARDEN) })).json()
    const hose = json.items[0]
    const hoseRows = rows.filter((r) => r.sku === 'HOSE-25M')
    expect(hoseRows).toHaveLength(hose.forecast.length)
    hose.forecast.forEach((p: { period: string; demand: number; intervals: { level: number; low: number; high: number }[] }, i: number) => {
      const r = hoseRows[i]!
      expect(r.period).toBe(p.period)
      expect(Number(r.demand)).toBe(p.demand)
      expect(Number(r.low80)).toBe(p.intervals[0]!.low)
      expect(Number(r.high95)).toBe(p.intervals[1]!.high)
      expect(r.model).toBe(hose.model)
      expect(r.rankBy).toBe('mase')
      expect(Number(r.holdoutError)).toBe(hose.holdoutErrors.mase)
    })
    // A negative forecast is a number, not a formula: written as is.
    expect(hoseRows[1]!.demand).toBe('-3.5')
  })

  it('neutralises text cells that a spreadsheet would run as a formula, and writes a failure row', async () => {
    const rows = parse((await csv()).body, { columns: true }) as Record<string, string>[]
    expect(rows.map((r) => r.sku)).toEqual([
      'HOSE-25M',
      'HOSE-25M',
      `'=HYPERLINK("http://x.example","click")`,
      `'-SHOVEL, "steel"`,
    ])
    expect(rows[3]).toMatchObject({ period: '', demand: '', model: '', failure: 'series-too-short: level-smoothing needs 2 periods, has 1' })
  })

  it('honours sku, 404s another tenant, and keeps JSON without Accept: text/csv', async () => {
    const one = parse((await csv('?sku=HOSE-25M')).body, { columns: true }) as unknown[]
    expect(one).toHaveLength(2)
    expect((await csv('', KEY_HEATING)).statusCode).toBe(404)
    const json = await app.inject({ url: `/v1/runs/${runId}/results`, headers: { ...auth(KEY_GARDEN), accept: 'application/json, text/csv;q=0.5' } })
    expect(json.headers['content-type']).toMatch(/application\/json/)
  })
})

describe('CSV export dialects and gzip', () => {
  let app: FastifyInstance
  let runId: string
  beforeAll(async () => {
    const gateway = new InMemoryGatewayDouble()
    app = await build({ config: testConfig(), gateway })
    runId = (await app.inject({ method: 'POST', url: '/v1/runs', headers: auth(KEY_GARDEN), payload: REQUEST })).json().id
    gateway.complete(runId, items())
  })
  afterAll(() => app.close())
  const get = (query: string, headers: Record<string, string> = {}) =>
    app.inject({ url: `/v1/runs/${runId}/results${query}`, headers: { ...auth(KEY_GARDEN), accept: 'text/csv', ...headers } })

  it('writes semicolons and decimal commas, and reads back to the same numbers', async () => {
    const plain = parse((await get('')).body, { columns: true }) as Record<string, string>[]
    const res = await get('?delimiter=semicolon&decimalSeparator=comma')
    expect(res.statusCode).toBe(200)
    const lines = res.body.split('\r\n')
    expect(lines[0]).toBe('sku;period;demand;low80;high80;low95;high95;model;rankBy;holdoutError;failure')
    // 10.25 and -7.125 from the fixture, with a decimal comma; -3.5 stays a number (no formula prefix).
    expect(lines[1]).toMatch(/^HOSE-25M;2026-01;10,25;8;12;7;13;/)
    expect(lines[2]).toMatch(/^HOSE-25M;2026-02;-3,5;-6;-1;-7,125;0;/)
    const rows = parse(res.body, { columns: true, delimiter: ';' }) as Record<string, string>[]
    expect(rows.map((r) => r.sku)).toEqual(plain.map((r) => r.sku))
    rows.forEach((r, i) => {
      for (const column of ['demand', 'low80', 'high80', 'low95', 'high95']) {
        const value = r[column]!
        expect(value).not.toContain('.')
        expect(value === '' ? '' : Number(value.replace(',', '.'))).toBe(plain[i]![column] === '' ? '' : Number(plain[i]![column]))
      }
    })
  })

  it('writes tabs, quoting a text cell that holds a delimiter of any kind', async () => {
    const res = await get('?delimiter=tab')
    const lines = res.body.split('\r\n')
    expect(lines[0]!.split('\t')).toHaveLength(11)
    expect(lines[1]).toMatch(/^HOSE-25M\t2026-01\t10.25\t/)
    expect(res.body).toContain(`"'-SHOVEL, ""steel"""`)
    const rows = parse(res.body, { columns: true, delimiter: '\t' }) as Record<string, string>[]
    expect(rows.at(-1)).toMatchObject({ sku: `'-SHOVEL, "steel"`, failure: 'series-too-short: level-smoothing needs 2 periods, has 1' })
  })

  it('refuses a comma delimiter with a decimal comma, naming decimalSeparator', async () => {
    const res = await get('?decimalSeparator=comma')
    expect(res.statusCode).toBe(400)
    expect(res.json()).toMatchObject({ errors: [{ path: 'decimalSeparator', message: 'a decimal comma needs delimiter=semicolon or delimiter=tab' }] })
  })

  it('streams the export gzip-compressed for Accept-Encoding: gzip', async () => {
    const plain = await get('?delimiter=semicolon&decimalSeparator=comma')
    const zipped = await get('?delimiter=semicolon&decimalSeparator=comma', { 'accept-encoding': 'gzip' })
    expect(zipped.statusCode).toBe(200)
    expect(zipped.headers['content-encoding']).toBe('gzip')
    expect(zipped.headers.vary).toBe('accept, Accept-Encoding')
    expect(gunzipSync(zipped.rawPayload).toString('utf8')).toBe(plain.body)
  })
})

describe('CSV helpers', () => {
  it('prefersCsv follows q-values', () => {
    expect(prefersCsv('text/csv')).toBe(true)
    expect(prefersCsv('application/json;q=0.9, text/csv')).toBe(true)
    expect(prefersCsv('application/json, text/csv;q=0.5')).toBe(false)
    expect(prefersCsv('*/*')).toBe(false)
    expect(prefersCsv(undefined)).toBe(false)
  })

  it('textCell prefixes formula starts (=, +, -, @, tab, CR) and quotes per RFC 4180', () => {
    expect(['=1+1', '+1', '-1', '@SUM(A1)', '\tx', '\rx'].map(textCell)).toEqual([
      "'=1+1",
      "'+1",
      "'-1",
      "'@SUM(A1)",
      `"'\tx"`, // quoted: a tab may be the delimiter
      `"'\rx"`,
    ])
    expect(textCell('a,"b"')).toBe('"a,""b"""')
    // Any delimiter the export may use is quoted, whichever one the file has.
    expect(textCell('a;b')).toBe('"a;b"')
    expect(textCell('HOSE-25M')).toBe('HOSE-25M')
  })

  // Issue 14 finding 13. Before the fix " =1+1" and "\u00a0=1+1" went out unchanged (seen failing).
  it('textCell neutralises a formula sign after any leading whitespace, no-break spaces included', () => {
    const blank = fc.constantFrom(' ', '\u00a0', '\u2007', '\u202f', '\u3000', '\ufeff', '\t', '\n', '\v', '\f')
    fc.assert(
      fc.property(fc.array(blank, { maxLength: 4 }), fc.constantFrom('=', '+', '-', '@'), fc.string({ maxLength: 10 }), (blanks, sign, rest) => {
        const cell = textCell(blanks.join('') + sign + rest)
        expect(cell.startsWith("'") || cell.startsWith(`"'`)).toBe(true)
      }),
      { numRuns: 500 },
    )
    expect(textCell(' 12 pipes')).toBe(' 12 pipes')
  })
})

describe('CSV export with replenishment figures', () => {
  let app: FastifyInstance
  let gateway: InMemoryGatewayDouble
  let runId: string
  beforeAll(async () => {
    gateway = new InMemoryGatewayDouble()
    app = await build({ config: testConfig(), gateway })
    const body = { ...REQUEST, replenishment: { leadTimePeriods: 1, serviceLevel: 0.95, packSize: 6 } }
    runId = (await app.inject({ method: 'POST', url: '/v1/runs', headers: auth(KEY_GARDEN), payload: body })).json().id
    const base = items()[0] as Extract<ResultItem, { model: string }>
    const replenishment = {
      leadTimePeriods: 1, reviewPeriods: 0, leadTimeSdPeriods: 0, serviceLevel: 0.95, minimumOrder: 0, packSize: 6,
      leadTimeDemand: 10.25, coverDemand: 10.25, sigma: 1.5, z: 1.6448536269514715, safetyStock: 3, reorderPoint: 13,
      orderQuantity: 12, formula: 'summed-step-variance' as const,
      periods: [
        { period: '2026-01', coverDemand: 10.25, sigma: 1.5, safetyStock: 3, reorderPoint: 13 },
        { period: '2026-02', coverDemand: 0, sigma: 2, safetyStock: 4, reorderPoint: 4 },
      ],
    }
    gateway.complete(runId, [{ ...base, replenishment }, items()[2]!])
  })
  afterAll(() => app.close())

  it('adds the policy and per-period figures before failure, and keeps failed rows aligned', async () => {
    const res = await app.inject({ url: `/v1/runs/${runId}/results`, headers: { ...auth(KEY_GARDEN), accept: 'text/csv' } })
    const rows = parse(res.body, { columns: true }) as Record<string, string>[]
    expect(Object.keys(rows[0]!).slice(10)).toEqual([
      'leadTimePeriods', 'reviewPeriods', 'leadTimeSdPeriods', 'serviceLevel', 'coverDemand', 'safetyStock', 'reorderPoint',
      'orderQuantity', 'minimumOrder', 'packSize', 'failure',
    ])
    expect(rows[0]).toMatchObject({ period: '2026-01', coverDemand: '10.25', safetyStock: '3', reorderPoint: '13', orderQuantity: '12', packSize: '6' })
    expect(rows[1]).toMatchObject({ period: '2026-02', safetyStock: '4', reorderPoint: '4', failure: '' })
    expect(rows[2]).toMatchObject({ sku: "'-SHOVEL, \"steel\"", safetyStock: '', failure: expect.stringContaining('series-too-short') })
  })
})
