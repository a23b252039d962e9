import { describe, expect, it } from 'vitest'
import { mergeSkus, recordWorklist, WorklistService, type WorklistDeps } from '../../src/runs/worklist-service.js'
import type { StoredWorklistEntry } from '../../src/storage/worklist/worklist-store.js'
import type { Review } from '../../src/runs/review.js'
import type { WorklistEntry } from '../../src/runs/worklist.js'

describe('mergeSkus', () => {
  it('merges sorted lists in byte order (as Redis orders members), without repeats', () => {
    // Byte order: digits < upper case < lower case < any non-ASCII letter (UTF-8 lead byte >= 0xC3).
    expect(mergeSkus([['A-1', 'B-2', 'é-1'], ['A-1', 'Z-9', 'a-1']])).toEqual(['A-1', 'B-2', 'Z-9', 'a-1', 'é-1'])
    expect(mergeSkus([[], []])).toEqual([])
  })
})

/** In-memory stand-ins for the stores, holding exactly what the service reads. */
function fakes(state: { entries: Record<string, StoredWorklistEntry>; flagged: string[]; published: Record<string, string> }) {
  const reviews = new Map<string, Review>()
  const after = (list: string[], a: string | null, n: number) => mergeSkus([list]).filter((s) => a === null || s > a).slice(0, n)
  const reviewed: string[] = []
  const deps: WorklistDeps = {
    worklist: {
      skusAfter: async (_t, kind, a, n) => after(Object.values(state.entries).filter((e) => (kind === 'any' ? e.kinds.length > 0 : e.kinds.includes(kind))).map((e) => e.sku), a, n),
      entries: async (_t, skus) => skus.map((s) => state.entries[s] ?? null),
      reviews: async (_t, skus) => skus.map((s) => reviews.get(s) ?? null),
      setReview: async (_t, sku, r) => void reviews.set(sku, r),
      counts: async () => ({ 'large-change': 0, failed: 0, 'short-history': 0 }),
    },
    accuracy: {
      flaggedAfter: async (_t, a, n) => after(state.flagged, a, n),
      flaggedCount: async () => state.flagged.length,
      getMany: async (_t, skus) =>
        skus.map((sku) =>
          state.flagged.includes(sku)
            ? { sku, scoredPeriods: 5, mae: 30, bias: 30, mape: 20, trackingSignal: 5, smoothedTrackingSignal: 1, flagged: true, flaggedBy: ['tracking-signal' as const], trackingLimit: 4, smoothedTrackingLimit: 0.5, updatedAt: 'x' }
            : null,
        ),
      review: async (_t, sku) => (reviewed.push(sku), null),
    },
    runs: { publishedPoints: async (_t, skus) => skus.map((s) => (state.published[s] ? [{ runId: state.published[s]!, createdAtMs: 1, points: new Map() }] : [])) },
    now: () => new Date('2026-03-02T08:00:00Z'),
  }
  return { deps, reviewed }
}

const stored = (sku: string, runId: string, kinds: StoredWorklistEntry['kinds']): StoredWorklistEntry => ({
  sku, runId, createdAtMs: 1, kinds, changeRatio: null, previousRunId: null, commonPeriods: 0, failure: null, historyLength: kinds.includes('short-history') ? 4 : null,
})

describe('WorklistService', () => {
  it('lists biased and run-decided SKUs together, one item per SKU with every kind', async () => {
    const state = { entries: { HOE: stored('HOE', 'r1', ['short-history']), RAKE: stored('RAKE', 'r1', ['large-change']) }, flagged: ['RAKE', 'GLOVE'], published: {} }
    const service = new WorklistService(fakes(state).deps)
    const page = await service.list('t', { limit: 2, includeSnoozed: false })
    expect(page.items.map((i) => [i.sku, i.kinds])).toEqual([['GLOVE', ['biased']], ['HOE', ['short-history']]])
    const rest = await service.list('t', { limit: 2, includeSnoozed: false, cursor: page.nextCursor! })
    expect(rest.items.map((i) => [i.sku, i.kinds])).toEqual([['RAKE', ['biased', 'large-change']]])
    expect(rest.nextCursor).toBeNull()
  })

  it('a snooze of a SKU only biased ends with its next published forecast; a biased SKU\'s exception is reviewed too', async () => {
    const state = { entries: {} as Record<string, StoredWorklistEntry>, flagged: ['GLOVE'], published: { GLOVE: 'r1' } as Record<string, string> }
    const { deps, reviewed } = fakes(state)
    const service = new WorklistService(deps)
    expect((await service.review('t', 'GLOVE', 'snoozed', 'promotion'))?.review).toEqual({ state: 'snoozed', note: 'promotion', at: '2026-03-02T08:00:00.000Z', runId: 'r1' })
    expect(reviewed).toEqual(['GLOVE'])
    expect((await service.list('t', { limit: 10, includeSnoozed: false })).items).toEqual([])
    expect((await service.list('t', { limit: 10, includeSnoozed: true })).items[0]?.review?.state).toBe('snoozed')
    state.published.GLOVE = 'r2'
    expect((await service.list('t', { limit: 10, includeSnoozed: false })).items).toEqual([expect.objectContaining({ sku: 'GLOVE', review: null })])
  })

  it('a SKU on no list cannot be reviewed', async () => {
    const service = new WorklistService(fakes({ entries: { TROWEL: stored('TROWEL', 'r1', []) }, flagged: [], published: {} }).deps)
    expect(await service.review('t', 'TROWEL', 'acknowledged', '')).toBeNull()
    expect(await service.review('t', 'NONE', 'acknowledged', '')).toBeNull()
  })
})

describe('recordWorklist', () => {
  it('compares with the forecast published before this run, and leaves a SKU whose forecast a newer run pushed out', async () => {
    const recorded: WorklistEntry[] = []
    const points = (v: number) => new Map([['2026-01', v]])
    const published: Record<string, { runId: string; createdAtMs: number; points: Map<string, number> }[]> = {
      RAKE: [{ runId: 'r2', createdAtMs: 2, points: points(150) }, { runId: 'r1', createdAtMs: 1, points: points(100) }],
      HOE: [{ runId: 'r3', createdAtMs: 3, points: points(10) }],
    }
    await recordWorklist(
      {
        runs: { publishedPoints: async (_t, skus) => skus.map((s) => published[s] ?? []) },
        worklist: { record: async (_t, _r, _c, entries) => (recorded.push(...entries), entries.length) },
      },
      't', 'r2', 2,
      [
        { sku: 'RAKE', failure: null, shortHistory: null },
        { sku: 'HOE', failure: null, shortHistory: 3 },
        { sku: 'SPADE', failure: { code: 'empty-series', message: 'm' }, shortHistory: null },
      ],
      25,
    )
    expect(recorded.map((e) => [e.sku, e.kinds, e.changeRatio])).toEqual([
      ['RAKE', ['large-change'], 0.5],
      ['SPADE', ['failed'], null],
    ])
  })
})
