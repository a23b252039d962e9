import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Redis } from 'ioredis'
import { parsePeriod } from '../../../src/engine/index.js'
import type { PendingHistory } from '../../../src/history/accumulator.js'
import { mergeHistory } from '../../../src/history/merge.js'
import { HistoryStore } from '../../../src/storage/histories/history-store.js'
import { CursorError, decodeCursor, encodeCursor } from '../../../src/storage/paging.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../../helpers/redis.js'

let url: string
let prefix: string
let redis: Redis
let store: HistoryStore
beforeAll(async () => {
  url = await redisUrlForTests()
  prefix = uniquePrefix('history-store')
  redis = new Redis(url, { maxRetriesPerRequest: 2 })
  store = new HistoryStore(redis, { prefix })
})
afterAll(async () => {
  redis?.disconnect()
  if (url && prefix) await deleteKeys(url, prefix)
})

const pending = (sku: string, start: string, demand: number[], tags?: string[]): PendingHistory => ({
  sku,
  incoming: { frequency: 'month', startOrdinal: parsePeriod(start, 'month'), demand, ...(tags ? { tags } : {}) },
  rows: demand.length,
  origin: {},
})
const overwrite = (current: Parameters<typeof mergeHistory>[0], p: PendingHistory) => mergeHistory(current, p.incoming, 'overwrite')

describe('HistoryStore', () => {
  it('concurrent overwrites to one SKU all land (the revision check retries the loser)', async () => {
    await store.apply('garden', [pending('HOSE', '2025-01', [1])], overwrite)
    const writes = Array.from({ length: 5 }, (_, i) => store.apply('garden', [pending('HOSE', `2025-0${i + 2}`, [i + 2])], overwrite))
    const results = await Promise.all(writes)
    for (const [r] of results) expect(r).toEqual({ outcome: 'updated' })
    expect((await store.get('garden', 'HOSE'))?.demand).toEqual([1, 2, 3, 4, 5, 6])
  })

  it('a refused merge writes nothing for that SKU and the rest of the batch still lands', async () => {
    const weekly: PendingHistory = { sku: 'HOSE', incoming: { frequency: 'week', startOrdinal: 2800, demand: [1] }, rows: 1, origin: {} }
    const [refused, created] = await store.apply('garden', [weekly, pending('RAKE', '2025-01', [4])], overwrite)
    expect(refused).toHaveProperty('reason')
    expect(created).toEqual({ outcome: 'created' })
    expect((await store.get('garden', 'HOSE'))?.frequency).toBe('month')
  })

  it('keeps tag sets in step with the stored tags and tenants apart', async () => {
    await store.apply('garden', [pending('GLOVE', '2025-01', [1], ['site:north', 'category:workwear'])], overwrite)
    await store.apply('garden', [pending('GLOVE', '2025-02', [2], ['site:south'])], overwrite)
    const north = await store.list('garden', { limit: 10, tag: 'site:north' })
    const south = await store.list('garden', { limit: 10, tag: 'site:south' })
    expect(north.items).toEqual([])
    expect(south.items.map((i) => i.sku)).toEqual(['GLOVE'])
    expect(await store.get('heating', 'GLOVE')).toBeNull()
    expect(await store.missing('garden', ['GLOVE', 'NOPE', 'RAKE'])).toEqual(['NOPE'])
    const batches = []
    for await (const b of store.select('garden', { all: true }, 2)) batches.push(b.map((h) => h.sku))
    expect(batches).toEqual([['GLOVE', 'HOSE'], ['RAKE']])
  })

  it('cursors round-trip and refuse anything else', () => {
    expect(decodeCursor(encodeCursor('SKU/ä 1'))).toBe('SKU/ä 1')
    expect(() => decodeCursor('not a cursor')).toThrow(CursorError)
    expect(() => decodeCursor('')).toThrow(CursorError)
  })
})
