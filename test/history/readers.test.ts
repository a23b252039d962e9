import { Readable } from 'node:stream'
import fc from 'fast-check'
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

  it('refuses the whole upload on a record it cannot delimit (unclosed quote), and an empty file', async () => {
    const acc = new HistoryAccumulator({ frequency: 'month', duplicates: 'sum' })
    const read = readCsvUpload(Readable.from(['sku,period,demand\nA,2025-01,1\nB,"2025-01,1\nC,2025-01,1\n']), layout, acc)
    await expect(read).rejects.toThrow(/^the CSV cannot be read \(Quote Not Closed.*; nothing was stored$/)
    await expect(readCsvUpload(Readable.from(['']), layout, acc)).rejects.toThrow(UploadFormatError)
  })

  // Issue 14 finding 4. Before the fix the fourth cell was ignored and "1,000" stored as 1 (seen failing).
  it('refuses a row with more cells than the header (an unquoted thousands separator)', async () => {
    const acc = new HistoryAccumulator({ frequency: 'month', duplicates: 'sum' })
    await readCsvUpload(Readable.from(['sku,period,demand\nA,2025-01,1,000\nA,2025-02,7\n']), layout, acc)
    expect(acc.errors.listed).toEqual([
      { line: 2, reason: 'the row has 4 fields but the header has 3 (a thousands separator, or a delimiter in an unquoted cell?)' },
    ])
    expect(drained(acc)).toEqual([{ sku: 'A', demand: [7], rows: 1 }])
  })

  it('takes any row with more cells than the header as refused, never as a truncated value', async () => {
    const cell = fc.stringMatching(/^[0-9A-Z.]{1,6}$/)
    await fc.assert(
      fc.asyncProperty(fc.array(cell, { minLength: 4, maxLength: 8 }), async (cells) => {
        const acc = new HistoryAccumulator({ frequency: 'month', duplicates: 'sum' })
        await readCsvUpload(Readable.from([`sku,period,demand\n${cells.join(',')}\n`]), layout, acc)
        expect(drained(acc)).toEqual([])
        expect(acc.errors.rejectedRows).toBe(1)
        expect(acc.errors.listed[0]!.reason).toMatch(/^the row has \d+ fields but the header has 3/)
      }),
      { numRuns: 100 },
    )
  })

  // Issue 14 finding 3. Before the fix an over-long line was reported (once per chunk) as one rejected
  // record and every row after it vanished from the count; the upload still answered 200 (seen failing).
  it('refuses the whole upload when a line is over-long, wherever it sits and however the bytes arrive', async () => {
    const good = (i: number) => `S${i},2025-01,${i}`
    await fc.assert(
      fc.asyncProperty(
        fc.integer({ min: 0, max: 300 }),
        fc.integer({ min: 0, max: 300 }),
        fc.integer({ min: 64 * 1024 + 1, max: 100_000 }),
        fc.integer({ min: 1, max: 20_000 }),
        async (before, after, longChars, chunk) => {
          const lines = ['sku,period,demand', ...Array.from({ length: before }, (_, i) => good(i)), `LONG,2025-01,${'9'.repeat(longChars)}`]
          for (let i = 0; i < after; i++) lines.push(good(before + i))
          const text = lines.join('\n') + '\n'
          const parts: string[] = []
          for (let i = 0; i < text.length; i += chunk) parts.push(text.slice(i, i + chunk))
          const acc = new HistoryAccumulator({ frequency: 'month', duplicates: 'sum' })
          const err = await readCsvUpload(Readable.from(parts), layout, acc).then(() => null, (e: unknown) => e)
          expect(err).toBeInstanceOf(UploadFormatError)
          expect((err as Error).message).toBe(
            `a record is longer than 65536 characters (wrong delimiter, or an unclosed quote?) near line ${before + 2}; nothing was stored`,
          )
        },
      ),
      { numRuns: 30 },
    )
  })

  it('accounts for every data line exactly once when it reads a file with bad cells, in any chunking', async () => {
    const row = fc.oneof(
      fc.record({ ok: fc.constant(true), text: fc.integer({ min: 0, max: 99 }).map((n) => `S${n % 7},2025-0${1 + (n % 9)},${n}`) }),
      fc.record({ ok: fc.constant(false), text: fc.constantFrom('S1,2025-01,abc', 'S1,2025-13,1', ',2025-01,1', 'S1,2025-01', 'S1,2025-01,1,5') }),
    )
    await fc.assert(
      fc.asyncProperty(fc.array(row, { minLength: 1, maxLength: 60 }), fc.integer({ min: 1, max: 50 }), async (rows, chunk) => {
        const text = ['sku,period,demand', ...rows.map((r) => r.text)].join('\n')
        const parts: string[] = []
        for (let i = 0; i < text.length; i += chunk) parts.push(text.slice(i, i + chunk))
        const acc = new HistoryAccumulator({ frequency: 'month', duplicates: 'sum' })
        await readCsvUpload(Readable.from(parts), layout, acc)
        const stored = [...acc.drain()].reduce((n, p) => n + p.rows, 0)
        const badLines = rows.flatMap((r, i) => (r.ok ? [] : [i + 2]))
        expect(stored).toBe(rows.length - badLines.length)
        expect(acc.errors.listed.map((e) => e.line)).toEqual(badLines)
      }),
      { numRuns: 100 },
    )
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
