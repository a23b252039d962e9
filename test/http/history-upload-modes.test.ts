import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { KEY_GARDEN, KEY_HEATING, auth } from './gateway-double.js'
import { buildHistoryApp, type HistoryApp } from './history-helpers.js'

// Upload modes and feed batch ids against a real Redis. No forecast numbers are judged here:
// every expected quantity is a sum of the rows sent, worked by hand beside the check.
let h: HistoryApp
beforeAll(async () => {
  h = await buildHistoryApp('http-history-upload-modes')
})
afterAll(() => h?.close())

const csv = (query: string, rows: string[]) =>
  h.app.inject({
    method: 'POST',
    url: `/v1/history${query}`,
    headers: { ...auth(KEY_GARDEN), 'content-type': 'text/csv' },
    payload: ['sku,period,demand', ...rows].join('\n'),
  })
const demandOf = async (sku: string) => {
  const res = await h.app.inject({ url: `/v1/skus/${encodeURIComponent(sku)}/history`, headers: auth(KEY_GARDEN) })
  return res.statusCode === 200 ? (res.json() as { firstPeriod: string; demand: (number | null)[] }) : null
}
const put = (sku: string, body: object) =>
  h.app.inject({ method: 'PUT', url: `/v1/skus/${sku}/history`, headers: auth(KEY_GARDEN), payload: body })

describe('add (the default for dated rows) and feed batch ids', () => {
  it('adds a second transaction file to the month and does not add a resent batch twice', async () => {
    // File 1: 40 + 25 = 65 units in 2026-03; file 2: 30 units in 2026-03.
    const first = await csv('?batch=orders-0301', ['TWINE-100M,2026-03-02,40', 'TWINE-100M,2026-03-03,25'])
    expect(first.json()).toMatchObject({ mode: 'add', batch: 'orders-0301', skus: { created: 1, alreadyApplied: 0 } })
    const second = await csv('?batch=orders-0304', ['TWINE-100M,2026-03-04,30'])
    expect(second.json()).toMatchObject({ mode: 'add', skus: { updated: 1, alreadyApplied: 0 } })
    expect(await demandOf('TWINE-100M')).toEqual(expect.objectContaining({ firstPeriod: '2026-03', demand: [95] }))
    // The second file again under its batch id: left alone, still 65 + 30 = 95.
    const again = await csv('?batch=orders-0304', ['TWINE-100M,2026-03-04,30'])
    expect(again.statusCode).toBe(200)
    expect(again.json()).toMatchObject({ skus: { created: 0, updated: 0, alreadyApplied: 1 }, rows: { accepted: 1, rejected: 0 } })
    expect((await demandOf('TWINE-100M'))?.demand).toEqual([95])
  })

  it('remembers each SKU a batch wrote: a resend that also holds a new SKU writes only the new one', async () => {
    await csv('?batch=orders-0310', ['PEGS-50,2026-03-10,8'])
    const resend = await csv('?batch=orders-0310', ['PEGS-50,2026-03-10,8', 'CLOCHE-S,2026-03-10,3'])
    expect(resend.json()).toMatchObject({ skus: { created: 1, alreadyApplied: 1 } })
    expect((await demandOf('PEGS-50'))?.demand).toEqual([8])
    expect((await demandOf('CLOCHE-S'))?.demand).toEqual([3])
  })

  it('keeps batch ids per tenant and checks their form', async () => {
    const heating = await h.app.inject({
      method: 'POST',
      url: '/v1/history?batch=orders-0310',
      headers: { ...auth(KEY_HEATING), 'content-type': 'text/csv' },
      payload: 'sku,period,demand\nPEGS-50,2026-03-10,8\n',
    })
    expect(heating.json()).toMatchObject({ skus: { created: 1, alreadyApplied: 0 } })
    const bad = await csv('?batch=has%20space', ['PEGS-50,2026-03-11,1'])
    expect(bad.statusCode).toBe(400)
    expect(bad.json().errors).toEqual([{ path: 'batch', message: 'must be 1-200 visible ASCII characters' }])
  })
})

describe('overwrite (the default for period rows) and replace', () => {
  it('overwrites a resent period total instead of adding it', async () => {
    await csv('', ['FLEECE-L,2026-01,12', 'FLEECE-L,2026-02,14'])
    const again = await csv('', ['FLEECE-L,2026-02,14'])
    expect(again.json()).toMatchObject({ mode: 'overwrite' })
    expect(await demandOf('FLEECE-L')).toEqual(expect.objectContaining({ firstPeriod: '2026-01', demand: [12, 14] }))
    // add named explicitly adds even period rows: 14 + 6 = 20.
    await csv('?mode=add', ['FLEECE-L,2026-02,6'])
    expect((await demandOf('FLEECE-L'))?.demand).toEqual([12, 20])
    await csv('?mode=replace', ['FLEECE-L,2026-05,1'])
    expect(await demandOf('FLEECE-L')).toEqual(expect.objectContaining({ firstPeriod: '2026-05', demand: [1] }))
  })
})

describe('replace-open-period (month to date)', () => {
  it('replaces the open month of every stored SKU: sent SKUs get their total, SKUs left out get 0', async () => {
    expect((await put('MTD-A', { frequency: 'month', firstPeriod: '2026-10', demand: [5, 6, 40] })).statusCode).toBe(201)
    expect((await put('MTD-B', { frequency: 'month', firstPeriod: '2026-11', demand: [7, 10] })).statusCode).toBe(201)
    expect((await put('MTD-C', { frequency: 'month', firstPeriod: '2026-10', demand: [2, 3] })).statusCode).toBe(201)
    expect((await put('MTD-W', { frequency: 'week', firstPeriod: '2026-W48', demand: [4] })).statusCode).toBe(201)
    // Month to date for 2026-12: MTD-A 4 + 8 = 12 (yesterday's file said 40); MTD-B has no orders left.
    const res = await csv('?mode=replace-open-period', ['MTD-A,2026-12-01,4', 'MTD-A,2026-12-04,8'])
    expect(res.statusCode).toBe(200)
    expect(res.json()).toMatchObject({ mode: 'replace-open-period', openPeriod: '2026-12', skus: { updated: 1, zeroed: 1 } })
    expect((await demandOf('MTD-A'))?.demand).toEqual([5, 6, 12])
    expect((await demandOf('MTD-B'))?.demand).toEqual([7, 0])
    // MTD-C ends in 2026-11 (moving it forward is closing the month) and MTD-W is weekly: both untouched.
    expect((await demandOf('MTD-C'))?.demand).toEqual([2, 3])
    expect((await demandOf('MTD-W'))?.demand).toEqual([4])
    // The same file again changes nothing.
    const again = await csv('?mode=replace-open-period', ['MTD-A,2026-12-01,4', 'MTD-A,2026-12-04,8'])
    expect(again.json()).toMatchObject({ skus: { updated: 1, zeroed: 0 } })
    expect((await demandOf('MTD-A'))?.demand).toEqual([5, 6, 12])
  })

  it('asks for openPeriod when the rows span several periods, and refuses a SKU with rows outside a named one', async () => {
    const spans = await csv('?mode=replace-open-period', ['MTD-A,2026-11-30,1', 'MTD-A,2026-12-01,1'])
    expect(spans.statusCode).toBe(400)
    expect(spans.json().errors).toEqual([{ path: 'openPeriod', message: 'the rows span 2026-11..2026-12; name the open period with openPeriod' }])
    const named = await csv('?mode=replace-open-period&openPeriod=2026-12', ['MTD-A,2026-11-30,1', 'MTD-B,2026-12-02,9'])
    expect(named.json()).toMatchObject({ skus: { updated: 1, rejected: 1 }, rows: { accepted: 1, rejected: 1 } })
    expect(named.json().errors).toEqual([{ line: 2, sku: 'MTD-A', reason: expect.stringContaining('only the open period 2026-12') }])
    expect((await demandOf('MTD-A'))?.demand).toEqual([5, 6, 12])
    expect((await demandOf('MTD-B'))?.demand).toEqual([7, 9])
  })

  it('refuses openPeriod with another mode', async () => {
    const res = await csv('?openPeriod=2026-12', ['MTD-A,2026-12-01,1'])
    expect(res.statusCode).toBe(400)
    expect(res.json().errors).toEqual([{ path: 'openPeriod', message: 'mode is add' }])
  })
})
