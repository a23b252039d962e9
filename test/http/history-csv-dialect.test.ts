import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { KEY_GARDEN, auth } from './gateway-double.js'
import { buildHistoryApp, type HistoryApp } from './history-helpers.js'

// CSV dialects (delimiter, decimal comma) and tags on rows, in uploads. Sums worked by hand.
let h: HistoryApp
beforeAll(async () => {
  h = await buildHistoryApp('http-history-csv-dialect')
})
afterAll(() => h?.close())

const upload = (query: string, type: string, payload: string) =>
  h.app.inject({ method: 'POST', url: `/v1/history${query}`, headers: { ...auth(KEY_GARDEN), 'content-type': type }, payload })
const history = async (sku: string) => {
  const res = await h.app.inject({ url: `/v1/skus/${encodeURIComponent(sku)}/history`, headers: auth(KEY_GARDEN) })
  return res.statusCode === 200 ? res.json() : null
}

describe('decimal comma', () => {
  it('reads a semicolon file with decimal commas; a point or a thousands separator is a bad row', async () => {
    const body = [
      'sku;period;demand', // 1
      'PELLETS-15KG;2025-01-04;12,5', // 2
      'PELLETS-15KG;2025-01-18;7,25', // 3  January: 12.5 + 7.25 = 19.75
      'PELLETS-15KG;2025-02-02;3', // 4     February: 3
      'PELLETS-15KG;2025-02-09;1.5', // 5   a point: refused (with a decimal comma, 1.5 may be a thousands group)
      'PELLETS-15KG;2025-02-10;1.000,5', // 6 thousands separator: refused
      'PELLETS-15KG;2025-02-11;1,000;x', // 7 more cells than the header: refused
      'PELLETS-15KG;2025-02-12;-0,5', // 8  February: 3 - 0.5 = 2.5
    ].join('\n')
    const res = await upload('?delimiter=semicolon&decimalSeparator=comma', 'text/csv', body)
    expect(res.statusCode).toBe(200)
    const report = res.json()
    expect(report.rows).toEqual({ accepted: 4, rejected: 3 })
    expect(report.errors).toEqual([
      { line: 5, column: 'demand', sku: 'PELLETS-15KG', reason: 'demand "1.5" is not a number (use , as decimal comma and no thousands separator)' },
      { line: 6, column: 'demand', sku: 'PELLETS-15KG', reason: 'demand "1.000,5" is not a number (use , as decimal comma and no thousands separator)' },
      { line: 7, reason: expect.stringContaining('the row has 4 fields but the header has 3') },
    ])
    expect(await history('PELLETS-15KG')).toMatchObject({ firstPeriod: '2025-01', demand: [19.75, 2.5] })
  })

  it('reads tab-delimited files with decimal commas too', async () => {
    const res = await upload('?delimiter=tab&decimalSeparator=comma', 'text/csv', 'sku\tperiod\tdemand\r\nKINDLING-BAG\t2025-03\t0,75\r\n')
    expect(res.statusCode).toBe(200)
    expect(await history('KINDLING-BAG')).toMatchObject({ firstPeriod: '2025-03', demand: [0.75] })
  })

  it('keeps the decimal point by default, where a comma decimal is a bad row', async () => {
    const res = await upload('?delimiter=semicolon', 'text/csv', 'sku;period;demand\nFLUE-BRUSH;2025-03;2,5\nFLUE-BRUSH;2025-04;2.5\n')
    expect(res.json().errors).toEqual([{ line: 2, column: 'demand', sku: 'FLUE-BRUSH', reason: 'demand "2,5" is not a number (use . as decimal point)' }])
    expect(await history('FLUE-BRUSH')).toMatchObject({ firstPeriod: '2025-04', demand: [2.5] })
  })

  it('refuses a comma delimiter with a decimal comma, naming decimalSeparator, before reading anything', async () => {
    const res = await upload('?decimalSeparator=comma', 'text/csv', 'sku,period,demand\nNEVER-STORED,2025-01,1\n')
    expect(res.statusCode).toBe(400)
    expect(res.json()).toMatchInlineSnapshot(`
      {
        "detail": "decimalSeparator: a decimal comma needs delimiter=semicolon or delimiter=tab",
        "errors": [
          {
            "message": "a decimal comma needs delimiter=semicolon or delimiter=tab",
            "path": "decimalSeparator",
          },
        ],
        "status": 400,
        "title": "Validation failed",
        "type": "https://almanac.example/problems/validation-failed",
      }
    `)
    expect(await history('NEVER-STORED')).toBeNull()
    const unknown = await upload('?decimalSeparator=dot', 'text/csv', 'sku,period,demand\n')
    expect(unknown.statusCode).toBe(400)
    expect(unknown.json().errors[0].path).toBe('decimalSeparator')
  })
})

describe('tags on rows', () => {
  it('takes a CSV tags column: a SKU gets all its rows\' tags, sorted and without repeats', async () => {
    const body = [
      'sku;period;demand;labels', // 1
      'SHEARS;2025-01-05;2;category:garden|site:north', // 2
      'SHEARS;2025-01-20;3; site:north | season:spring ', // 3
      'SHEARS;2025-02-01;1;', // 4 empty cell: no tags from this row
      'SHEARS;2025-02-03;1;bad tag!', // 5 a bad tag: a bad row
      'GAITERS;2025-01-02;4', // 6 a short row stops before the tags column: no tags
    ].join('\n')
    const res = await upload('?delimiter=semicolon&tagsColumn=labels', 'text/csv', body)
    expect(res.statusCode).toBe(200)
    expect(res.json().errors).toEqual([{ line: 5, column: 'labels', sku: 'SHEARS', reason: expect.stringContaining('"bad tag!" must be 1-64 characters') }])
    expect(await history('SHEARS')).toMatchObject({ demand: [5, 1], tags: ['category:garden', 'season:spring', 'site:north'] })
    expect(await history('GAITERS')).toMatchObject({ demand: [4], tags: [] })
  })

  it('keeps stored tags when no row of the SKU carries any, and replaces them when one does', async () => {
    const put = await h.app.inject({
      method: 'PUT',
      url: '/v1/skus/BOOTS-42/history',
      headers: auth(KEY_GARDEN),
      payload: { frequency: 'month', firstPeriod: '2025-01', demand: [1], tags: ['category:workwear'] },
    })
    expect(put.statusCode).toBe(201)
    await upload('?tagsColumn=tags', 'text/csv', 'sku,period,demand,tags\nBOOTS-42,2025-02,2,\n')
    expect(await history('BOOTS-42')).toMatchObject({ demand: [1, 2], tags: ['category:workwear'] })
    await upload('?tagsColumn=tags', 'text/csv', 'sku,period,demand,tags\nBOOTS-42,2025-03,3,category:workwear|site:south\n')
    expect(await history('BOOTS-42')).toMatchObject({ demand: [1, 2, 3], tags: ['category:workwear', 'site:south'] })
  })

  it('refuses a SKU whose rows carry more than 32 tags together, and names a missing tags column', async () => {
    const rows = Array.from({ length: 33 }, (_, i) => `MANY-TAGS,2025-01-${String(i % 28 + 1).padStart(2, '0')},1,t${i}`)
    const res = await upload('?tagsColumn=tags', 'text/csv', ['sku,period,demand,tags', ...rows].join('\n'))
    expect(res.json()).toMatchObject({ rows: { accepted: 0, rejected: 33 }, skus: { rejected: 1 } })
    expect(res.json().errors).toEqual([{ line: 2, sku: 'MANY-TAGS', column: 'tags', reason: "the rows' tags together: at most 32 tags per SKU (got 33)" }])
    expect(await history('MANY-TAGS')).toBeNull()
    const missing = await upload('?tagsColumn=labels', 'text/csv', 'sku,period,demand\nX,2025-01,1\n')
    expect(missing.statusCode).toBe(400)
    expect(missing.json().errors[0].path).toBe('tagsColumn')
  })

  it('takes tags on NDJSON rows, with the same rules', async () => {
    const body = [
      '{"sku":"THERMO-SOCKS","period":"2025-01-03","demand":2,"tags":["category:workwear"]}',
      '{"sku":"THERMO-SOCKS","period":"2025-01-09","demand":1,"tags":["site:north","category:workwear"]}',
      '{"sku":"THERMO-SOCKS","period":"2025-01-10","demand":1,"tags":"site:north"}',
      '{"sku":"THERMO-SOCKS","period":"2025-01-11","demand":1,"tags":["no spaces"]}',
    ].join('\n')
    const res = await upload('', 'application/x-ndjson', body)
    expect(res.json().errors).toEqual([
      { line: 3, column: 'tags', sku: 'THERMO-SOCKS', reason: 'tags must be an array of strings' },
      { line: 4, column: 'tags', sku: 'THERMO-SOCKS', reason: expect.stringContaining('"no spaces" must be') },
    ])
    expect(await history('THERMO-SOCKS')).toMatchObject({ demand: [3], tags: ['category:workwear', 'site:north'] })
  })
})
