import { describe, expect, it } from 'vitest'
import { decodeRunRecord, newRunFields } from '../../../src/storage/runs/run-hash.js'
import { CursorError, decodeCursor, encodeCursor, pageOf } from '../../../src/storage/paging.js'
import { loadItem, storeItem } from '../../../src/storage/items/item-codec.js'
import type { ResultItem } from '../../../src/runs/contract.js'
import { runRequest } from '../../queue/fixtures.js'
import { ChunkTallier, tallyItems } from '../../../src/runs/tally.js'

const metrics = (mase: number | null) => ({ mae: 1, rmse: 1, mape: null, smape: 1, mase, wape: 1 })
const ok = (sku: string, model: 'level-smoothing' | 'trend-smoothing', mase: number | null, method: 'holdout' | 'in-sample' = 'holdout'): ResultItem => ({
  sku,
  frequency: 'month',
  model,
  family: model === 'level-smoothing' ? 'level' : 'trend',
  params: { levelWeight: 0.5 },
  modelChoice: { method, rankBy: 'mase', holdoutPeriods: 3, holdoutOrigins: 1 },
  holdoutErrors: metrics(mase),
  candidates: [],
  forecast: [{ period: '1', demand: 2, intervals: [] }],
  intervalMethod: 'none',
  warnings: [],
})
const bad = (sku: string): ResultItem => ({ sku, frequency: 'month', failure: { code: 'empty-series', message: 'no data' } })

describe('tallyItems', () => {
  it('counts every item as done and error items as failed', () => {
    const t = tallyItems([ok('a', 'level-smoothing', 1), bad('b'), ok('c', 'trend-smoothing', 2), ok('d', 'level-smoothing', 3)], 'mase')
    expect(t.done).toBe(4)
    expect(t.failed).toBe(1)
    expect([...t.wins]).toEqual([['level-smoothing', 2], ['trend-smoothing', 1]])
    expect(t.errSum).toBe(6)
    expect(t.errCount).toBe(3)
  })

  it('leaves undefined and in-sample errors out of the holdout mean', () => {
    const t = tallyItems([ok('a', 'level-smoothing', null), ok('b', 'level-smoothing', 5, 'in-sample'), ok('c', 'level-smoothing', 2)], 'mase')
    expect(t.errSum).toBe(2)
    expect(t.errCount).toBe(1)
  })

  it('handles an empty chunk', () => {
    expect(tallyItems([], 'mase')).toMatchObject({ done: 0, failed: 0, errSum: 0, errCount: 0 })
  })

  it('gives the same tally item by item, and a tally taken early is not changed by later items', () => {
    const tallier = new ChunkTallier('mase')
    tallier.add(ok('a', 'level-smoothing', 1))
    const early = tallier.tally()
    for (const item of [bad('b'), ok('c', 'trend-smoothing', 2)]) tallier.add(item)
    expect(tallier.tally()).toEqual(tallyItems([ok('a', 'level-smoothing', 1), bad('b'), ok('c', 'trend-smoothing', 2)], 'mase'))
    expect(early).toEqual({ done: 1, failed: 0, wins: new Map([['level-smoothing', 1]]), errSum: 1, errCount: 1 })
  })
})

describe('item encoding', () => {
  it('stores an item without its sku and restores it', () => {
    const item = ok('SKU-1', 'trend-smoothing', 0.8)
    const stored = storeItem(item)
    expect(stored.includes('SKU-1')).toBe(false)
    expect(loadItem('SKU-1', stored)).toEqual(item)
  })
})

describe('cursors', () => {
  it('round-trip any SKU, including unicode and separators', () => {
    for (const sku of ['A', 'x|y:z', 'Gießkanne 10 l', '(]-+']) expect(decodeCursor(encodeCursor(sku))).toBe(sku)
  })

  it('reject strings this service did not issue, also a SKU encoded without the check', () => {
    for (const c of ['', '***', 'a b', 'QQ==', 'QQ', 'QQ.abcdefgh', `${encodeCursor('A')}x`]) expect(() => decodeCursor(c)).toThrow(CursorError)
  })

  it('page an in-memory list after the item the cursor names, and refuse an unknown one', () => {
    const ids = ['a', 'b', 'c', 'd', 'e']
    const first = pageOf(ids, (id) => id, 2, undefined)
    expect(first).toEqual({ items: ['a', 'b'], nextCursor: encodeCursor('b') })
    const second = pageOf(ids, (id) => id, 2, first.nextCursor!)
    expect(second.items).toEqual(['c', 'd'])
    expect(pageOf(ids, (id) => id, 2, second.nextCursor!)).toEqual({ items: ['e'], nextCursor: null })
    // A well-formed cursor naming an item the list does not hold (deleted, or of another list).
    expect(() => pageOf(ids, (id) => id, 2, encodeCursor('zz'))).toThrow(CursorError)
  })
})

describe('decodeRunRecord', () => {
  const { series: _s, ...settings } = runRequest([])
  const fields = newRunFields({ id: 'r1', tenant: 't', createdAt: '2026-01-01T00:00:00.000Z', total: 3, chunks: 1, settings, scope: null, origin: { kind: 'inline' } })

  it('returns null for a missing run and refuses a hash that does not decode', () => {
    expect(decodeRunRecord({})).toBeNull()
    expect(() => decodeRunRecord({ ...fields, status: 'sleeping' })).toThrow(/run record r1 does not decode: status/)
    expect(() => decodeRunRecord({ ...fields, settings: '{"horizon":0}' })).toThrow(/settings/)
    expect(() => decodeRunRecord({ ...fields, done: '-1' })).toThrow(/done/)
  })

  it('keeps the scope of a run over stored histories and the failure of a failed run', () => {
    const stored = newRunFields({ id: 'r2', tenant: 't', createdAt: '2026-01-01T00:00:00.000Z', total: 3, chunks: 1, settings, scope: { tags: ['category:garden'] }, origin: { kind: 'schedule', scheduleId: 'nightly-1' } })
    const failed = { ...stored, status: 'failed', failure: '{"code":"chunk-failed","message":"chunk 0 failed"}' }
    expect(decodeRunRecord(failed)).toMatchObject({ scope: { tags: ['category:garden'] }, failure: { code: 'chunk-failed', message: 'chunk 0 failed' } })
    expect(decodeRunRecord(fields)).toMatchObject({ scope: null, failure: null })
  })

  it('keeps the origin, with a scheduleId exactly for a schedule\'s run, and refuses one that does not decode', () => {
    const scheduled = newRunFields({ id: 'r3', tenant: 't', createdAt: '2026-01-01T00:00:00.000Z', total: 3, chunks: 1, settings, scope: { all: true }, origin: { kind: 'schedule', scheduleId: 's-1' } })
    expect(decodeRunRecord(scheduled)?.origin).toEqual({ kind: 'schedule', scheduleId: 's-1' })
    expect(decodeRunRecord(fields)?.origin).toEqual({ kind: 'inline' })
    expect(() => decodeRunRecord({ ...fields, origin: '{"kind":"schedule"}' })).toThrow(/run record r1 does not decode: origin/)
    expect(() => decodeRunRecord({ ...fields, origin: '{"kind":"scope","scheduleId":"s-1"}' })).toThrow(/origin/)
    expect(() => decodeRunRecord({ ...fields, origin: '{"kind":"upload"}' })).toThrow(/origin/)
    // A run stored before runs recorded their origin (an upgrade) reads as inline, or scope when it has one.
    const { origin: _inline, ...olderInline } = fields
    expect(decodeRunRecord(olderInline)?.origin).toEqual({ kind: 'inline' })
    const { origin: _scheduled, ...olderScheduled } = scheduled
    expect(decodeRunRecord(olderScheduled)?.origin).toEqual({ kind: 'scope' })
  })

  it('gives no summary before the run succeeds', () => {
    expect(decodeRunRecord(fields)).toMatchObject({ status: 'queued', summary: null, progress: { total: 3, done: 0, failed: 0 } })
  })

  it('builds the summary from the accumulators once succeeded', () => {
    const r = decodeRunRecord({ ...fields, status: 'succeeded', 'win:level-smoothing': '2', 'win:trend-smoothing': '1', errSum: '3', errCount: '2' })
    expect(r?.summary).toEqual({ rankBy: 'mase', modelCounts: { 'level-smoothing': 2, 'trend-smoothing': 1 }, meanHoldoutError: 1.5 })
  })

  it('reports no mean when no winner had a defined holdout error', () => {
    const r = decodeRunRecord({ ...fields, status: 'succeeded', 'win:level-smoothing': '1' })
    expect(r?.summary?.meanHoldoutError).toBeNull()
  })
})
