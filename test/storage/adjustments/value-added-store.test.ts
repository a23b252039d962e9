import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Redis } from 'ioredis'
import { formatPeriod, parsePeriod } from '../../../src/engine/index.js'
import type { ValueAddedRecord } from '../../../src/runs/value-added.js'
import { VALUE_ADDED_PERIODS_KEPT, ValueAddedStore } from '../../../src/storage/adjustments/value-added-store.js'
import { MAX_POINTS_PER_SERIES } from '../../../src/schemas/run.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../../helpers/redis.js'

// Value-added records per SKU against a real Redis: the bound on the periods kept. Invented figures.
let url: string
let prefix: string
let redis: Redis

beforeAll(async () => {
  url = await redisUrlForTests()
  prefix = uniquePrefix('value-added-store')
  redis = new Redis(url, { maxRetriesPerRequest: 2 })
})
afterAll(async () => {
  redis?.disconnect()
  await deleteKeys(url, prefix)
})

const month = (i: number) => formatPeriod(parsePeriod('2026-01', 'month') + i, 'month')
const rec = (period: string, actualDemand: number): ValueAddedRecord => ({
  period, runId: 'run-1', statisticalDemand: 10, finalDemand: 12, naiveDemand: 9, actualDemand, author: 'dana',
})

describe('ValueAddedStore', () => {
  it('keeps as many periods as a history can hold by default', () => {
    expect(VALUE_ADDED_PERIODS_KEPT).toBe(MAX_POINTS_PER_SERIES)
  })

  it('keeps the newest periods past the bound, closing period after period, and only the SKU written', async () => {
    const store = new ValueAddedStore(redis, { prefix, periodsKept: 3 })
    // Periods arrive one closing at a time, as uploads bring each month's actuals.
    for (let i = 0; i < 5; i++) await store.record('garden', 'HEDGE-TRIMMER', [rec(month(i), 20 + i)])
    expect((await store.records('garden', 'HEDGE-TRIMMER')).map((r) => [r.period, r.actualDemand])).toEqual([
      ['2026-03', 22],
      ['2026-04', 23],
      ['2026-05', 24],
    ])
    // A late actual for a period older than the newest three is recorded and dropped again in the same step.
    await store.record('garden', 'HEDGE-TRIMMER', [rec('2025-12', 5)])
    expect((await store.records('garden', 'HEDGE-TRIMMER')).map((r) => r.period)).toEqual(['2026-03', '2026-04', '2026-05'])
    // One batch of more periods than the bound keeps its newest.
    await store.record('garden', 'LEAF-BLOWER', [0, 1, 2, 3, 4, 5].map((i) => rec(month(i), i)))
    expect((await store.records('garden', 'LEAF-BLOWER')).map((r) => r.period)).toEqual(['2026-04', '2026-05', '2026-06'])
    expect(await store.records('garden', 'HEDGE-TRIMMER')).toHaveLength(3)
  })

  it('below the bound nothing is dropped and a corrected actual replaces only the actual', async () => {
    const store = new ValueAddedStore(redis, { prefix, periodsKept: 3 })
    expect(await store.record('heating', 'RADIATOR-VALVE', [rec('2026-01', 7), rec('2026-02', 8)])).toEqual({ added: 2, corrected: 0 })
    expect(await store.record('heating', 'RADIATOR-VALVE', [rec('2026-02', 9)])).toEqual({ added: 0, corrected: 1 })
    expect((await store.records('heating', 'RADIATOR-VALVE')).map((r) => [r.period, r.actualDemand])).toEqual([
      ['2026-01', 7],
      ['2026-02', 9],
    ])
  })
})
