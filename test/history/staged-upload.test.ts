import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { HistoryAccumulator } from '../../src/history/accumulator.js'
import { partOf, StagedUpload, type UploadSink, type UploadStaging } from '../../src/history/staged-upload.js'
import type { PendingHistory } from '../../src/history/accumulator.js'

/**
 * Issue 14, finding 9: a streamed upload keeps its rows in Redis past a
 * threshold, split by SKU. The reference it must match is the in-memory
 * accumulator it replaces: the same histories, the same rejections, the same counts.
 */

/** A staging area in memory that records what was asked of it. */
class MemoryStaging implements UploadStaging {
  readonly lists = new Map<number, string[]>()
  appends = 0
  failNext = false
  async append(chunks: ReadonlyMap<number, string>): Promise<void> {
    if (this.failNext) throw new Error('staging unavailable')
    this.appends++
    for (const [part, chunk] of chunks) this.lists.set(part, [...(this.lists.get(part) ?? []), chunk])
  }
  async read(part: number): Promise<string[]> {
    return this.lists.get(part) ?? []
  }
  async discard(parts: readonly number[]): Promise<void> {
    for (const part of parts) this.lists.delete(part)
  }
}

type Item =
  | { kind: 'row'; sku: string; ordinal: number; demand: number; line: number; dated: boolean; tags: string[] }
  | { kind: 'series'; sku: string; start: number; demand: (number | null)[]; line: number; tags?: string[] }

function feed(items: readonly Item[], sink: UploadSink): void {
  for (const it of items) {
    if (it.kind === 'row') sink.addRow(it.sku, it.ordinal, it.demand, { line: it.line }, it.dated, it.tags)
    else {
      const incoming = { frequency: 'month' as const, startOrdinal: it.start, demand: it.demand, ...(it.tags ? { tags: it.tags } : {}) }
      sink.addSeries(it.sku, incoming, { line: it.line })
    }
  }
}

async function collect(parts: AsyncIterable<HistoryAccumulator>): Promise<PendingHistory[]> {
  const out: PendingHistory[] = []
  for await (const acc of parts) out.push(...acc.drain())
  return out
}

const bySku = (a: PendingHistory, b: PendingHistory) => (a.sku < b.sku ? -1 : a.sku > b.sku ? 1 : 0)
const errorKey = (e: object) => JSON.stringify(e)

const items = fc
  .array(
    fc.oneof(
      fc.record({
        kind: fc.constant('row' as const),
        sku: fc.constantFrom('RAKE-1', 'RAKE-2', 'HOSE-9', 'GLOVE-L', 'BOILER-Ä', 'p'),
        ordinal: fc.integer({ min: 24_300, max: 24_320 }),
        demand: fc.oneof(fc.integer({ min: -5, max: 500 }), fc.double({ min: 0, max: 1e6, noNaN: true })),
        line: fc.nat(1000),
        dated: fc.boolean(),
        tags: fc.subarray(['category:garden', 'site:north', 'season:winter']),
      }),
      fc.record(
        {
          kind: fc.constant('series' as const),
          sku: fc.constantFrom('RAKE-1', 'SHOVEL-3', 'HOSE-9', 'p'),
          start: fc.integer({ min: 24_300, max: 24_310 }),
          demand: fc.array(fc.oneof(fc.integer({ min: 0, max: 90 }), fc.constant(null)), { minLength: 1, maxLength: 6 }),
          line: fc.nat(1000),
          tags: fc.subarray(['category:heating', 'site:south']),
        },
        { requiredKeys: ['kind', 'sku', 'start', 'demand', 'line'] },
      ),
    ),
    { maxLength: 120 },
  )
  .map((list) => list as Item[])

describe('StagedUpload', () => {
  it('gives the same histories and rejected-row counts as the in-memory accumulator, spilled or not (fast-check)', async () => {
    await fc.assert(
      fc.asyncProperty(items, fc.integer({ min: 1, max: 3000 }), fc.integer({ min: 1, max: 7 }), async (list, spillBytes, parts) => {
        const reference = new HistoryAccumulator({ frequency: 'month', duplicates: 'sum' })
        feed(list, reference)
        const staging = new MemoryStaging()
        const staged = new StagedUpload({ frequency: 'month', duplicates: 'sum' }, staging, { parts, spillBytes })
        feed(list, staged)
        const expected = [...reference.drain()].sort(bySku)
        const got = (await collect(staged.parts())).sort(bySku)
        expect(got).toEqual(expected)
        expect(staged.errors.rejectedRows).toBe(reference.errors.rejectedRows)
        if (staged.partsStaged === 0) {
          expect(staged.errors.listed).toEqual(reference.errors.listed)
          expect(staged.kinds).toEqual(reference.kinds)
        } else {
          // Spilled, kinds also count rows the replay refuses.
          expect(staged.kinds.dated).toBeGreaterThanOrEqual(reference.kinds.dated)
          expect(staged.kinds.period).toBeGreaterThanOrEqual(reference.kinds.period)
          // Rows refused for a SKU given as a series in an earlier stretch come as one error per stretch,
          // at the stretch's first line: each listed error is one of the reference's, and none is missing by SKU and reason.
          const mine = staged.errors.listed.map(errorKey)
          const theirs = new Set(reference.errors.listed.map(errorKey))
          for (const e of mine) expect(theirs).toContain(e)
          const reasons = (list: readonly { sku?: string; reason: string }[]) => new Set(list.map((e) => `${e.sku}|${e.reason}`))
          expect(reasons(staged.errors.listed)).toEqual(reasons(reference.errors.listed))
        }
        // Every part read back was forgotten once written.
        expect(staging.lists.size).toBe(0)
      }),
      { numRuns: 300 },
    )
  })

  it('with duplicates=last, a later stretch\'s value for a period replaces an earlier stretch\'s, as a later row would', async () => {
    const staging = new MemoryStaging()
    const staged = new StagedUpload({ frequency: 'month', duplicates: 'last' }, staging, { parts: 3, spillBytes: 1 })
    staged.addRow('TROWEL-2', 24_301, 3, { line: 2 }, false)
    staged.addRow('LOPPER-7', 24_300, 5, { line: 3 }, false)
    staged.addRow('TROWEL-2', 24_301, 4, { line: 4 }, false)
    staged.addRow('TROWEL-2', 24_303, 1, { line: 5 }, false)
    const got = (await collect(staged.parts())).sort(bySku).map((p) => [p.sku, p.incoming.demand, p.rows, p.origin])
    expect(got).toEqual([
      ['LOPPER-7', [5], 1, { line: 3 }],
      ['TROWEL-2', [4, 0, 1], 3, { line: 2 }],
    ])
    expect(staged.partsStaged).toBeGreaterThan(0)
  })

  it('below the threshold never touches the staging area', async () => {
    const staging = new MemoryStaging()
    const staged = new StagedUpload({ frequency: 'month', duplicates: 'sum' }, staging, { parts: 8, spillBytes: 1_000_000 })
    for (let i = 0; i < 100; i++) staged.addRow(`RAKE-${i % 10}`, 24_300 + (i % 3), 1, { line: i + 2 }, false)
    const parts = []
    for await (const acc of staged.parts()) parts.push(acc.size)
    expect(parts).toEqual([10])
    expect(staging.appends).toBe(0)
    expect(staged.partsStaged).toBe(0)
  })

  it('past the threshold puts each SKU in one part only, and discard() forgets every staged part', async () => {
    const staging = new MemoryStaging()
    const staged = new StagedUpload({ frequency: 'month', duplicates: 'sum' }, staging, { parts: 4, spillBytes: 2000 })
    for (let i = 0; i < 200; i++) staged.addRow(`HEATER-${i % 12}`, 24_300 + (i % 5), 1, { line: i + 2 }, false)
    await staged.settle()
    expect(staging.appends).toBeGreaterThan(1)
    for (const [part, chunks] of staging.lists) {
      for (const line of chunks.join('\n').split('\n')) expect(partOf((JSON.parse(line.slice(2)) as [string])[0], 4)).toBe(part)
    }
    await staged.discard()
    expect(staging.lists.size).toBe(0)
  })

  it('a failed append surfaces at the next settle(), not as an unhandled rejection', async () => {
    const staging = new MemoryStaging()
    staging.failNext = true
    const staged = new StagedUpload({ frequency: 'month', duplicates: 'sum' }, staging, { parts: 2, spillBytes: 10 })
    staged.addRow('BOOTS-44', 24_300, 1, { line: 2 }, false)
    await new Promise((resolve) => setTimeout(resolve, 5))
    await expect(staged.settle()).rejects.toThrow('staging unavailable')
  })
})
