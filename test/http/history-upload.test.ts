import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { KEY_GARDEN, KEY_HEATING, auth } from './gateway-double.js'
import { buildHistoryApp, type HistoryApp } from './history-helpers.js'

let h: HistoryApp
beforeAll(async () => {
  h = await buildHistoryApp('http-history-upload')
})
afterAll(() => h?.close())

const upload = (query: string, type: string, payload: string, key = KEY_GARDEN) =>
  h.app.inject({ method: 'POST', url: `/v1/history${query}`, headers: { ...auth(key), 'content-type': type }, payload })
const history = async (sku: string, key = KEY_GARDEN) => {
  const res = await h.app.inject({ url: `/v1/skus/${encodeURIComponent(sku)}/history`, headers: auth(key) })
  return res.statusCode === 200 ? res.json() : null
}
const put = (sku: string, body: object) =>
  h.app.inject({ method: 'PUT', url: `/v1/skus/${sku}/history`, headers: auth(KEY_GARDEN), payload: body })

describe('POST /v1/history with CSV', () => {
  it('keeps good rows, reports each bad row by line, column and reason, and leaves other SKUs untouched', async () => {
    expect((await put('SHOVEL', { frequency: 'month', firstPeriod: '2024-01', demand: [1, 2, 3] })).statusCode).toBe(201)
    expect((await put('RAKE', { frequency: 'month', firstPeriod: '2024-06', demand: [9, 9] })).statusCode).toBe(201)
    const body = [
      'item;date;qty;note', // line 1
      'HOSE-25M;2025-01-03;4;', // 2
      'HOSE-25M;2025-01-20;6;first half', // 3
      'HOSE-25M;2025-03-02;5', // 4 (February has no rows: 0)
      'RAKE;2025-01-10;abc', // 5 bad demand
      ';2025-01-10;3', // 6 empty SKU
      'RAKE;2025-02-30;1', // 7 no such day
      'GLOVE-L;2025-02-01;2', // 8
      '"GLOVE-L";"2025-02-15";"1.5"', // 9 quoted cells
      '', // 10 blank: skipped
      'GLOVE-L;2025-02', // 11 too few fields
    ].join('\r\n')
    const res = await upload('?skuColumn=item&periodColumn=date&demandColumn=qty&delimiter=semicolon', 'text/csv', body)
    expect(res.statusCode).toBe(200)
    const report = res.json()
    expect(report).toMatchObject({
      mode: 'add',
      frequency: 'month',
      rows: { accepted: 5, rejected: 4 },
      skus: { created: 2, updated: 0, rejected: 0 },
      errorsNotListed: 0,
    })
    expect(report.errors).toEqual([
      { line: 5, column: 'qty', sku: 'RAKE', reason: 'demand "abc" is not a number (use . as decimal point)' },
      { line: 6, column: 'item', reason: 'SKU is empty' },
      { line: 7, column: 'date', sku: 'RAKE', reason: expect.stringContaining('no such day in that month') },
      { line: 11, column: 'qty', reason: 'the row has 2 fields; column qty is missing' },
    ])
    expect(await history('HOSE-25M')).toMatchObject({ firstPeriod: '2025-01', demand: [10, 0, 5] })
    expect(await history('GLOVE-L')).toMatchObject({ firstPeriod: '2025-02', demand: [3.5] })
    // RAKE had only bad rows: its stored history is as before; SHOVEL was not in the upload.
    expect(await history('RAKE')).toMatchObject({ firstPeriod: '2024-06', demand: [9, 9] })
    expect(await history('SHOVEL')).toMatchObject({ firstPeriod: '2024-01', demand: [1, 2, 3] })
  })

  it('sums daily rows into months (sums worked by hand)', async () => {
    const rows = ['sku,period,demand']
    // January 2025: demand = day of month, 1 + 2 + ... + 31 = 31 * 32 / 2 = 496.
    for (let d = 1; d <= 31; d++) rows.push(`HEATER-OIL,2025-01-${String(d).padStart(2, '0')},${d}`)
    // February 2025 (28 days): 2 per day = 56, plus one return of -6 on the 10th: 50.
    for (let d = 1; d <= 28; d++) rows.push(`HEATER-OIL,2025-02-${String(d).padStart(2, '0')},2`)
    rows.push('HEATER-OIL,2025-02-10,-6')
    const res = await upload('?frequency=month', 'text/csv', rows.join('\n'))
    expect(res.json().rows).toEqual({ accepted: 60, rejected: 0 })
    expect(await history('HEATER-OIL')).toMatchObject({ frequency: 'month', firstPeriod: '2025-01', demand: [496, 50] })
  })

  it('sums dated rows into ISO weeks across a year boundary', async () => {
    // ISO weeks as Python's date.isocalendar() gives them: 2020-12-28 and 2021-01-03 are in 2020-W53,
    // 2021-01-04 starts 2021-W01, 2021-01-17 (a Sunday) ends 2021-W02.
    const body = 'sku,period,demand\nSTOVE,2020-12-28,1\nSTOVE,2021-01-03,2\nSTOVE,2021-01-04,4\nSTOVE,2021-01-17,8\n'
    const res = await upload('?frequency=week&mode=replace', 'text/csv', body)
    expect(res.statusCode).toBe(200)
    expect(await history('STOVE')).toMatchObject({ frequency: 'week', firstPeriod: '2020-W53', demand: [3, 4, 8], lastPeriod: '2021-W02' })
  })

  it('duplicates=last keeps the last row of a bucket (content type with a charset)', async () => {
    const body = 'sku,period,demand\nTWINE,2025-01,5\nTWINE,2025-01,7\nTWINE,2025-02,1\n'
    expect((await upload('?duplicates=last', 'text/csv; charset=utf-8', body)).statusCode).toBe(200)
    expect(await history('TWINE')).toMatchObject({ demand: [7, 1] })
  })

  it('overwrite adds new actuals after the stored ones and overwrites a period sent again', async () => {
    await put('SEED-MIX', { frequency: 'month', firstPeriod: '2025-01', demand: [3, 4, 5], tags: ['category:garden'] })
    const res = await upload('?mode=overwrite', 'text/csv', 'sku,period,demand\nSEED-MIX,2025-03,6\nSEED-MIX,2025-04,7\n')
    expect(res.json().skus).toEqual({ created: 0, updated: 1, rejected: 0, alreadyApplied: 0, zeroed: 0 })
    expect(await history('SEED-MIX')).toMatchObject({ firstPeriod: '2025-01', demand: [3, 4, 6, 7], tags: ['category:garden'] })
  })

  it('refuses other content types with 415', async () => {
    const xml = await upload('', 'application/xml', '<rows/>')
    expect(xml.statusCode).toBe(415)
    // The answer names what this route takes, not only JSON.
    expect(xml.json().detail).toBe('Send the body as application/json, text/csv, application/x-ndjson or application/ndjson')
  })

  it('a header without the named column is a 400 problem naming the parameter, and stores nothing', async () => {
    const res = await upload('?skuColumn=article', 'text/csv', 'sku,period,demand\nNEVER,2025-01,1\n')
    expect(res.statusCode).toBe(400)
    expect(res.json().errors[0].path).toBe('skuColumn')
    expect(await history('NEVER')).toBeNull()
  })

  it('lists the first 1000 errors and counts the rest; reads a UTF-8 BOM and CRLF line ends', async () => {
    const bad = Array.from({ length: 1005 }, () => 'CAPPED,2025-01-01,x').join('\r\n')
    const res = await upload('', 'text/csv', `\ufeffsku,period,demand\r\nCAPPED,2025-01-01,1\r\n${bad}\r\n`)
    expect(res.json()).toMatchObject({ rows: { accepted: 1, rejected: 1005 }, errorsNotListed: 5 })
    expect(res.json().errors).toHaveLength(1000)
    expect(res.json().errors[999].line).toBe(1002)
    expect(await history('CAPPED')).toMatchObject({ demand: [1] })
  })

  it('an upload over the body limit is a 413 and stores nothing', async () => {
    const line = 'BIG,2025-01-01,1\n'
    const body = 'sku,period,demand\n' + line.repeat(Math.ceil((1.2 * 1024 * 1024) / line.length))
    const res = await upload('', 'text/csv', body)
    expect(res.statusCode).toBe(413)
    expect(res.json().type).toBe('https://almanac.example/problems/payload-too-large')
    expect(await history('BIG')).toBeNull()
  })
})

describe('POST /v1/history with NDJSON and JSON', () => {
  it('takes series lines and row lines in one NDJSON upload', async () => {
    const body = [
      JSON.stringify({ sku: 'BOOTS-42', frequency: 'month', firstPeriod: '2025-01', demand: [5, null, 7], tags: ['category:workwear'] }),
      JSON.stringify({ sku: 'VEST-M', period: '2025-01-14', demand: 2 }),
      JSON.stringify({ sku: 'VEST-M', period: '2025-02-02', demand: '3' }),
      '{not json',
      JSON.stringify({ sku: 'VEST-M', period: '2025-02-03', demand: null }),
      '',
    ].join('\n')
    // Dated rows add and series overwrite by default: a mix needs the mode named, and nothing is stored.
    const mixed = await upload('', 'application/x-ndjson', body)
    expect(mixed.statusCode).toBe(400)
    expect(mixed.json().errors).toEqual([{ path: 'mode', message: expect.stringContaining('mixes 2 dated row(s)') }])
    expect(await history('BOOTS-42')).toBeNull()
    const res = await upload('?mode=add', 'application/x-ndjson', body)
    expect(res.statusCode).toBe(200)
    expect(res.json()).toMatchObject({
      mode: 'add',
      rows: { accepted: 3, rejected: 2 },
      errors: [
        { line: 4, reason: 'the line is not valid JSON' },
        { line: 5, column: 'demand', sku: 'VEST-M', reason: 'demand must be a number' },
      ],
    })
    expect(await history('BOOTS-42')).toMatchObject({ demand: [5, null, 7], tags: ['category:workwear'] })
    expect(await history('VEST-M')).toMatchObject({ firstPeriod: '2025-01', demand: [2, 3] })
  })

  it('takes a JSON body with mode and series, reporting bad items by index and field', async () => {
    const res = await h.app.inject({
      method: 'POST',
      url: '/v1/history',
      headers: auth(KEY_GARDEN),
      payload: {
        mode: 'replace',
        series: [
          { sku: 'HOSE-25M', frequency: 'month', firstPeriod: '2024-10', demand: [1, 2] },
          { sku: 'PLIERS', frequency: 'month', firstPeriod: '2024-10', demand: [1, 'x'] },
        ],
      },
    })
    expect(res.statusCode).toBe(200)
    expect(res.json()).toMatchObject({
      mode: 'replace',
      rows: { accepted: 1, rejected: 1 },
      skus: { created: 0, updated: 1, rejected: 0 },
      errors: [{ item: 1, sku: 'PLIERS', column: 'series[1].demand[1]' }],
    })
    expect(await history('HOSE-25M')).toMatchObject({ firstPeriod: '2024-10', demand: [1, 2] })
  })

  it('an overwrite with another frequency rejects that SKU only, with its rows counted', async () => {
    const res = await upload('?frequency=week', 'text/csv', 'sku,period,demand\nHOSE-25M,2025-01-06,1\nFRESH,2025-01-06,2\n')
    expect(res.json()).toMatchObject({
      rows: { accepted: 1, rejected: 1 },
      skus: { created: 1, updated: 0, rejected: 1 },
      errors: [{ line: 2, sku: 'HOSE-25M', reason: expect.stringContaining('stored history is by month') }],
    })
    expect(await history('HOSE-25M')).toMatchObject({ frequency: 'month', demand: [1, 2] })
  })
})

describe('GET /v1/skus', () => {
  it('pages by SKU with a cursor and filters by tag and prefix; tenants are apart', async () => {
    for (const sku of ['GL-01', 'GL-02', 'GL-03', 'GM-01']) {
      await put(sku, { frequency: 'quarter', firstPeriod: '2024-Q1', demand: [1, 2, 3], tags: sku === 'GL-02' ? ['site:south'] : ['site:north'] })
    }
    const first = (await h.app.inject({ url: '/v1/skus?prefix=GL-&limit=2', headers: auth(KEY_GARDEN) })).json()
    expect(first.items.map((i: { sku: string }) => i.sku)).toEqual(['GL-01', 'GL-02'])
    expect(first.items[0]).toEqual({
      sku: 'GL-01',
      frequency: 'quarter',
      firstPeriod: '2024-Q1',
      lastPeriod: '2024-Q3',
      periodCount: 3,
      tags: ['site:north'],
      updatedAt: expect.any(String),
    })
    const second = (await h.app.inject({ url: `/v1/skus?prefix=GL-&limit=2&cursor=${first.nextCursor}`, headers: auth(KEY_GARDEN) })).json()
    expect(second).toMatchObject({ items: [{ sku: 'GL-03' }], nextCursor: null })
    const north = (await h.app.inject({ url: '/v1/skus?tag=site:north&prefix=G', headers: auth(KEY_GARDEN) })).json()
    expect(north.items.map((i: { sku: string }) => i.sku)).toEqual(['GL-01', 'GL-03', 'GM-01'])
    const heating = (await h.app.inject({ url: '/v1/skus', headers: auth(KEY_HEATING) })).json()
    expect(heating).toEqual({ items: [], nextCursor: null })
    const bad = await h.app.inject({ url: '/v1/skus?cursor=@@', headers: auth(KEY_GARDEN) })
    expect(bad.statusCode).toBe(400)
  })

  it('moves a SKU between tag sets when its tags change', async () => {
    await put('GL-02', { frequency: 'quarter', firstPeriod: '2024-Q1', demand: [1], tags: ['site:north'] })
    const south = (await h.app.inject({ url: '/v1/skus?tag=site:south', headers: auth(KEY_GARDEN) })).json()
    expect(south.items).toEqual([])
  })
})
