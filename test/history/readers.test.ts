import { Readable } from 'node:stream'
import { describe, expect, it } from 'vitest'
import { HistoryAccumulator } from '../../src/history/accumulator.js'
import { readCsvUpload, UploadFormatError } from '../../src/history/csv-reader.js'
import { readNdjsonUpload } from '../../src/history/ndjson-reader.js'

const bytewise = (text: string) => Readable.from([...Buffer.from(text, 'utf8')].map((b) => Buffer.from([b])))
const drained = (acc: HistoryAccumulator) => [...acc.drain()].map((p) => ({ sku: p.sku, demand: p.incoming.demand, rows: p.rows }))
const layout = { delimiter: ',', skuColumn: 'sku', periodColumn: 'period', demandColumn: 'demand' }

describe('readNdjsonUpload', () => {
  it('reassembles lines and multi-byte characters split across chunks, with or without a final newline', async () => {
    const acc = new HistoryAccumulator({ frequency: 'month', duplicates: 'sum' })
    const text = '{"sku":"SÄGE-1","period":"2025-01","demand":2}\r\n{"sku":"SÄGE-1","period":"2025-02","demand":3}'
    await readNdjsonUpload(bytewise(text), acc)
    expect(drained(acc)).toEqual([{ sku: 'SÄGE-1', demand: [2, 3], rows: 2 }])
    expect(acc.errors.listed).toEqual([])
  })

  it('refuses a SKU given both as a series and as rows, naming the earlier line', async () => {
    const acc = new HistoryAccumulator({ frequency: 'month', duplicates: 'sum' })
    const text = '{"sku":"A","firstPeriod":"2025-01","demand":[1]}\n{"sku":"A","period":"2025-02","demand":1}\n'
    await readNdjsonUpload(Readable.from([text]), acc)
    expect(acc.errors.listed).toEqual([{ line: 2, sku: 'A', reason: 'SKU was already given as a whole series on line 1' }])
  })
})

describe('readCsvUpload', () => {
  it('counts lines of quoted fields that span lines, and ignores extra columns', async () => {
    const acc = new HistoryAccumulator({ frequency: 'month', duplicates: 'sum' })
    const text = 'note,sku,period,demand\n"two\nlines",A,2025-01,1\nx,A,2025-02,oops\n'
    await readCsvUpload(Readable.from([text]), layout, acc)
    expect(acc.errors.listed).toEqual([{ line: 4, column: 'demand', sku: 'A', reason: 'demand "oops" is not a number (use . as decimal point)' }])
    expect(drained(acc)).toEqual([{ sku: 'A', demand: [1], rows: 1 }])
  })

  it('reports an unreadable record (unclosed quote) and an empty file', async () => {
    const acc = new HistoryAccumulator({ frequency: 'month', duplicates: 'sum' })
    await readCsvUpload(Readable.from(['sku,period,demand\nA,2025-01,1\nB,"2025-01,1\n']), layout, acc)
    expect(acc.errors.listed).toHaveLength(1)
    expect(acc.errors.listed[0]!.reason).toMatch(/^unreadable CSV record/)
    await expect(readCsvUpload(Readable.from(['']), layout, acc)).rejects.toThrow(UploadFormatError)
  })
})

describe('HistoryAccumulator limits', () => {
  it('refuses a SKU whose bucket total leaves the demand range, keeping the others', () => {
    const acc = new HistoryAccumulator({ frequency: 'month', duplicates: 'sum' })
    acc.addRow('HUGE', 10, 9e14, { line: 2 })
    acc.addRow('HUGE', 10, 9e14, { line: 3 })
    acc.addRow('OK', 10, 1, { line: 4 })
    expect(drained(acc)).toEqual([{ sku: 'OK', demand: [1], rows: 1 }])
    expect(acc.errors.listed).toEqual([{ line: 2, sku: 'HUGE', reason: 'a month total is larger than 1000000000000000 in size' }])
    expect(acc.errors.rejectedRows).toBe(2)
  })
})
