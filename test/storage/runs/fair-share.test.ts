import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Redis } from 'ioredis'
import { FairShare, MAX_CHUNK_PRIORITY } from '../../../src/storage/runs/fair-share.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../../helpers/redis.js'

let url: string
let prefix: string
let redis: Redis

beforeAll(async () => {
  url = await redisUrlForTests()
  prefix = uniquePrefix('fair-share')
  redis = new Redis(url)
})
afterAll(async () => {
  redis?.disconnect()
  if (url && prefix) await deleteKeys(url, prefix)
})

describe('FairShare: chunk priorities per tenant', () => {
  it('numbers a first run from 1 and a newcomer from the clock, not behind the queue', async () => {
    const fair = new FairShare(redis, prefix, 'queue-a')
    expect(await fair.reserve('garden', 5, true)).toEqual([1, 2, 3, 4, 5])
    await fair.started(1)
    await fair.started(2)
    // heating had nothing queued: its chunks interleave with garden's remaining 3, 4, 5.
    expect(await fair.reserve('heating', 3, false)).toEqual([3, 4, 5])
    // garden's next run queues behind its own earlier chunks.
    expect(await fair.reserve('garden', 2, false)).toEqual([6, 7])
  })

  it('the clock only moves forward', async () => {
    const fair = new FairShare(redis, prefix, 'queue-b')
    await fair.reserve('garden', 10, true)
    await fair.started(8)
    await fair.started(3) // a retried chunk
    expect(await fair.reserve('heating', 1, false)).toEqual([9])
  })

  it('starts numbering again when the queue was idle, and never passes the ceiling', async () => {
    const fair = new FairShare(redis, prefix, 'queue-c')
    await fair.reserve('garden', 100, true)
    await fair.started(100)
    expect(await fair.reserve('garden', 2, true)).toEqual([1, 2])
    const huge = await fair.reserve('workwear', MAX_CHUNK_PRIORITY + 3, false)
    expect(huge.slice(-4)).toEqual([MAX_CHUNK_PRIORITY, MAX_CHUNK_PRIORITY, MAX_CHUNK_PRIORITY, MAX_CHUNK_PRIORITY])
  })
})
