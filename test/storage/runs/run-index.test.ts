import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Redis } from 'ioredis'
import { RunStore } from '../../../src/storage/runs/run-store.js'
import { runIndexKey, runKeys } from '../../../src/storage/keys.js'
import { CursorError, encodeCursor } from '../../../src/storage/paging.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../../helpers/redis.js'
import { runRequest, syntheticSeries } from '../../queue/fixtures.js'
import type { RunOrigin } from '../../../src/runs/contract.js'

let url: string
let prefix: string
let redis: Redis
let store: RunStore
const minute = 60_000
const t0 = Date.parse('2026-03-01T10:00:00.000Z')

beforeAll(async () => {
  url = await redisUrlForTests()
  prefix = uniquePrefix('run-index')
  redis = new Redis(url)
  store = new RunStore(redis, { prefix, resultTtlSeconds: 600, recordTtlSeconds: 1200 })
})

afterAll(async () => {
  redis?.disconnect()
  if (url && prefix) await deleteKeys(url, prefix)
})

const create = (tenant: string, id: string, atMs: number, origin?: RunOrigin) =>
  store.createRun(tenant, id, runRequest(syntheticSeries(2)), 10, new Date(atMs), origin)

const ids = (page: { items: readonly { id: string }[] }) => page.items.map((r) => r.id)

describe('RunIndex', () => {
  beforeAll(async () => {
    await create('garden', 'r-1', t0, { kind: 'inline' })
    await create('garden', 'r-2', t0 + minute, { kind: 'scope' })
    await create('garden', 'r-3', t0 + 2 * minute, { kind: 'schedule', scheduleId: 'nightly' })
    await create('garden', 'r-4', t0 + 3 * minute, { kind: 'schedule', scheduleId: 'weekly' })
    // Same creation time as r-4: ties go to the larger run id first.
    await create('garden', 'r-5', t0 + 3 * minute, { kind: 'inline' })
    await create('heating', 'h-1', t0, { kind: 'inline' })
    await store.endRun('garden', 'r-2', 'cancelled', null, new Date(t0 + 4 * minute))
  })

  it('lists the tenant\'s runs newest first, with their origins, and pages through them by cursor', async () => {
    const all = await store.listRuns('garden', {}, { limit: 100 })
    expect(ids(all)).toEqual(['r-5', 'r-4', 'r-3', 'r-2', 'r-1'])
    expect(all.nextCursor).toBeNull()
    expect(all.items.map((r) => r.origin)).toEqual([
      { kind: 'inline' },
      { kind: 'schedule', scheduleId: 'weekly' },
      { kind: 'schedule', scheduleId: 'nightly' },
      { kind: 'scope' },
      { kind: 'inline' },
    ])
    const seen: string[] = []
    let cursor: string | undefined
    do {
      const page = await store.listRuns('garden', {}, { limit: 2, ...(cursor === undefined ? {} : { cursor }) })
      expect(page.items.length).toBeLessThanOrEqual(2)
      seen.push(...ids(page))
      cursor = page.nextCursor ?? undefined
    } while (cursor !== undefined)
    expect(seen).toEqual(['r-5', 'r-4', 'r-3', 'r-2', 'r-1'])
    expect(ids(await store.listRuns('heating', {}, { limit: 100 }))).toEqual(['h-1'])
  })

  it('filters by status, origin, schedule and creation time (from inclusive, to exclusive)', async () => {
    expect(ids(await store.listRuns('garden', { status: 'cancelled' }, { limit: 100 }))).toEqual(['r-2'])
    expect(ids(await store.listRuns('garden', { status: 'queued', origin: 'inline' }, { limit: 100 }))).toEqual(['r-5', 'r-1'])
    expect(ids(await store.listRuns('garden', { origin: 'schedule' }, { limit: 100 }))).toEqual(['r-4', 'r-3'])
    expect(ids(await store.listRuns('garden', { scheduleId: 'nightly' }, { limit: 100 }))).toEqual(['r-3'])
    expect(ids(await store.listRuns('garden', { createdFromMs: t0 + minute, createdToMs: t0 + 3 * minute }, { limit: 100 }))).toEqual(['r-3', 'r-2'])
    // Filtered pages keep their cursor across runs the filter skips.
    const first = await store.listRuns('garden', { origin: 'inline' }, { limit: 1 })
    expect(ids(first)).toEqual(['r-5'])
    const second = await store.listRuns('garden', { origin: 'inline' }, { limit: 1, cursor: first.nextCursor! })
    expect(ids(second)).toEqual(['r-1'])
  })

  it('skips and removes an entry whose record is gone; trims expired entries when a run is added', async () => {
    await redis.del(runKeys(prefix, 'garden', 'r-3').run)
    expect(ids(await store.listRuns('garden', {}, { limit: 100 }))).toEqual(['r-5', 'r-4', 'r-2', 'r-1'])
    expect(await redis.zscore(runIndexKey(prefix, 'garden'), 'r-3')).toBeNull()
    // An entry older than the record TTL (1200 s) whose record has expired goes at the next add;
    // one that old whose record is still there (a run that ended late) stays.
    await redis.zadd(runIndexKey(prefix, 'garden'), t0 - 3600_000, 'expired-1')
    await create('garden', 'r-6', t0 + 30 * minute)
    expect(await redis.zscore(runIndexKey(prefix, 'garden'), 'expired-1')).toBeNull()
    expect(await redis.zscore(runIndexKey(prefix, 'garden'), 'r-1')).not.toBeNull()
  })

  it('refuses a cursor it did not issue', async () => {
    await expect(store.listRuns('garden', {}, { limit: 2, cursor: 'abc.def' })).rejects.toBeInstanceOf(CursorError)
    await expect(store.listRuns('garden', {}, { limit: 2, cursor: encodeCursor('not-a-position') })).rejects.toBeInstanceOf(CursorError)
  })
})
