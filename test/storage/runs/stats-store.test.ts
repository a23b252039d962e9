import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Redis } from 'ioredis'
import { statsKeys } from '../../../src/storage/keys.js'
import { RunStats } from '../../../src/storage/runs/stats-store.js'
import { RunStore } from '../../../src/storage/runs/run-store.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../../helpers/redis.js'
import { runRequest, syntheticSeries } from '../../queue/fixtures.js'
import type { ChunkTally } from '../../../src/runs/tally.js'

let url: string
let prefix: string
let redis: Redis

beforeAll(async () => {
  url = await redisUrlForTests()
  prefix = uniquePrefix('stats-store')
  redis = new Redis(url)
})

afterAll(async () => {
  redis?.disconnect()
  if (url && prefix) await deleteKeys(url, prefix)
})

describe('RunStats', () => {
  it('puts each fit duration in the first bucket whose bound it does not exceed, and reads them cumulatively', async () => {
    const stats = new RunStats(redis, `${prefix}-fits`)
    // 0.001 is on a bound (counts in le=0.001); 0.0011 in le=0.005; 3 above every bound; NaN counts as 0 s.
    await stats.recordFits([0.001, 0.0011, 0.02, 3, NaN], 2)
    await stats.recordFits([0.5], 0)
    const f = await stats.fits()
    expect(f).toEqual({ ok: 4, error: 2, count: 6, sum: expect.any(Number), buckets: [2, 3, 3, 4, 4, 4, 4, 5, 5, 5, 6] })
    expect(f.sum).toBeCloseTo(0.001 + 0.0011 + 0.02 + 3 + 0.5, 9)
  })

  it('reads missing counters as zero and negative drift as zero', async () => {
    const stats = new RunStats(redis, `${prefix}-empty`)
    expect(await stats.runs()).toEqual({ queued: 0, running: 0, succeeded: 0, failed: 0, cancelled: 0 })
    expect((await stats.fits()).buckets).toHaveLength(11)
    await stats.moved('running', 'failed')
    expect(await stats.runs()).toEqual({ queued: 0, running: 0, succeeded: 0, failed: 1, cancelled: 0 })
  })

  it('follows the run store through created -> running -> succeeded and created -> cancelled', async () => {
    const p = `${prefix}-runs`
    const store = new RunStore(redis, { prefix: p, resultTtlSeconds: 60, recordTtlSeconds: 120 })
    await store.createRun('acme', 'r-1', runRequest(syntheticSeries(2)), 2, new Date())
    await store.createRun('acme', 'r-2', runRequest(syntheticSeries(2)), 2, new Date())
    expect(await store.stats.runs()).toMatchObject({ queued: 2, running: 0 })
    await store.startChunk('acme', 'r-1', new Date())
    await store.startChunk('acme', 'r-1', new Date()) // already running: no second move
    expect(await store.stats.runs()).toMatchObject({ queued: 1, running: 1 })
    const tally: ChunkTally = { done: 0, failed: 0, errSum: 0, errCount: 0, wins: new Map() }
    expect(await store.commitChunk('acme', 'r-1', 0, [], tally, new Date())).toBe('finished')
    await store.endRun('acme', 'r-2', 'cancelled', null, new Date())
    await store.endRun('acme', 'r-2', 'cancelled', null, new Date()) // already ended: unchanged
    expect(await store.stats.runs()).toEqual({ queued: 0, running: 0, succeeded: 1, failed: 0, cancelled: 1 })
    expect(Object.keys(await redis.hgetall(statsKeys(p).runs)).sort()).toEqual(['cancelled', 'queued', 'running', 'succeeded'])
  })
})
