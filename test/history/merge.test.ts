import { describe, expect, it } from 'vitest'
import { parsePeriod } from '../../src/engine/index.js'
import { mergeHistory } from '../../src/history/merge.js'
import type { HistoryData } from '../../src/history/types.js'

const stored: HistoryData = { frequency: 'month', firstPeriod: '2025-01', demand: [10, 11, 12], tags: ['category:garden'] }
const incoming = (start: string, demand: (number | null)[], tags?: string[]) => ({
  frequency: 'month' as const,
  startOrdinal: parsePeriod(start, 'month'),
  demand,
  ...(tags ? { tags } : {}),
})

describe('mergeHistory', () => {
  it('append: overlapping periods take the new value, new periods are added, tags kept', () => {
    expect(mergeHistory(stored, incoming('2025-03', [20, 21]), 'append')).toEqual({
      data: { frequency: 'month', firstPeriod: '2025-01', demand: [10, 11, 20, 21], tags: ['category:garden'] },
    })
  })

  it('append: a gap between stored and new periods becomes 0; an incoming null keeps the stored value', () => {
    expect(mergeHistory(stored, incoming('2025-05', [5]), 'append')).toEqual({
      data: { frequency: 'month', firstPeriod: '2025-01', demand: [10, 11, 12, 0, 5], tags: ['category:garden'] },
    })
    expect(mergeHistory(stored, incoming('2024-12', [1, null]), 'append')).toEqual({
      data: { frequency: 'month', firstPeriod: '2024-12', demand: [1, 10, 11, 12], tags: ['category:garden'] },
    })
  })

  it('append refuses another frequency; replace may change it', () => {
    const weekly = { frequency: 'week' as const, startOrdinal: parsePeriod('2025-W02', 'week'), demand: [1] }
    expect(mergeHistory(stored, weekly, 'append')).toHaveProperty('reason')
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
    expect(mergeHistory(stored, far, 'append')).toEqual({ reason: expect.stringContaining('at most 10000') })
  })
})
