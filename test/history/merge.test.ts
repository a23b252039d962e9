import { describe, expect, it } from 'vitest'
import { parsePeriod } from '../../src/engine/index.js'
import { mergeHistory, zeroPeriod } from '../../src/history/merge.js'
import { defaultMode } from '../../src/history/ingest.js'
import type { HistoryData } from '../../src/history/types.js'

const stored: HistoryData = { frequency: 'month', firstPeriod: '2025-01', demand: [10, 11, 12], tags: ['category:garden'] }
const incoming = (start: string, demand: (number | null)[], tags?: string[]) => ({
  frequency: 'month' as const,
  startOrdinal: parsePeriod(start, 'month'),
  demand,
  ...(tags ? { tags } : {}),
})

describe('mergeHistory', () => {
  it('overwrite: overlapping periods take the new value, new periods are added, tags kept', () => {
    expect(mergeHistory(stored, incoming('2025-03', [20, 21]), 'overwrite')).toEqual({
      data: { frequency: 'month', firstPeriod: '2025-01', demand: [10, 11, 20, 21], tags: ['category:garden'] },
    })
  })

  it('overwrite: a gap between stored and new periods becomes 0; an incoming null keeps the stored value', () => {
    expect(mergeHistory(stored, incoming('2025-05', [5]), 'overwrite')).toEqual({
      data: { frequency: 'month', firstPeriod: '2025-01', demand: [10, 11, 12, 0, 5], tags: ['category:garden'] },
    })
    expect(mergeHistory(stored, incoming('2024-12', [1, null]), 'overwrite')).toEqual({
      data: { frequency: 'month', firstPeriod: '2024-12', demand: [1, 10, 11, 12], tags: ['category:garden'] },
    })
  })

  it('overwrite refuses another frequency; replace may change it', () => {
    const weekly = { frequency: 'week' as const, startOrdinal: parsePeriod('2025-W02', 'week'), demand: [1] }
    expect(mergeHistory(stored, weekly, 'overwrite')).toHaveProperty('reason')
    expect(mergeHistory(stored, weekly, 'replace')).toEqual({
      data: { frequency: 'week', firstPeriod: '2025-W02', demand: [1], tags: ['category:garden'] },
    })
  })

  it('replace takes the upload as the whole history and its tags when given', () => {
    expect(mergeHistory(stored, incoming('2025-06', [3], ['site:north']), 'replace')).toEqual({
      data: { frequency: 'month', firstPeriod: '2025-06', demand: [3], tags: ['site:north'] },
    })
  })

  it('refuses a merge longer than 10,000 periods', () => {
    const far = incoming('2900-01', [1])
    expect(mergeHistory(stored, far, 'overwrite')).toEqual({ reason: expect.stringContaining('at most 10000') })
  })
})

describe('mergeHistory: add', () => {
  // Hand-checked sums: stored 2025-01..03 = 10, 11, 12.
  it('adds the quantities of periods both have, keeps the others, and fills a gap with 0', () => {
    expect(mergeHistory(stored, incoming('2025-03', [5, 7]), 'add')).toEqual({
      data: { frequency: 'month', firstPeriod: '2025-01', demand: [10, 11, 17, 7], tags: ['category:garden'] },
    })
    expect(mergeHistory(stored, incoming('2025-05', [2]), 'add')).toMatchObject({ data: { demand: [10, 11, 12, 0, 2] } })
  })

  it('treats a null on either side as nothing to add', () => {
    const withGap: HistoryData = { ...stored, demand: [10, null, 12] }
    expect(mergeHistory(withGap, incoming('2025-01', [null, 4, 1]), 'add')).toMatchObject({ data: { demand: [10, 4, 13] } })
  })

  it('refuses a sum beyond the value range and another frequency', () => {
    expect(mergeHistory(stored, incoming('2025-01', [1e15]), 'add')).toEqual({ reason: expect.stringContaining('2025-01 would hold') })
    expect(mergeHistory(stored, { ...incoming('2025-01', [1]), frequency: 'week' }, 'add')).toHaveProperty('reason')
  })

  it('creates a history when none is stored', () => {
    expect(mergeHistory(null, incoming('2025-02', [65]), 'add')).toMatchObject({ data: { firstPeriod: '2025-02', demand: [65] } })
  })
})

describe('zeroPeriod', () => {
  it('sets a period the history reaches to 0 and leaves one outside it alone', () => {
    expect(zeroPeriod(stored, parsePeriod('2025-02', 'month'))).toMatchObject({ demand: [10, 0, 12] })
    expect(zeroPeriod(stored, parsePeriod('2025-04', 'month'))).toBeNull()
    expect(zeroPeriod(stored, parsePeriod('2024-12', 'month'))).toBeNull()
  })
})

describe('defaultMode', () => {
  it('adds dated rows, overwrites period rows, and asks for a mode when an upload mixes them', () => {
    expect(defaultMode({ dated: 3, period: 0 })).toEqual({ mode: 'add' })
    expect(defaultMode({ dated: 0, period: 2 })).toEqual({ mode: 'overwrite' })
    expect(defaultMode({ dated: 0, period: 0 })).toEqual({ mode: 'overwrite' })
    expect(defaultMode({ dated: 1, period: 1 })).toHaveProperty('reason')
  })
})
