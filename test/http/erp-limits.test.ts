import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { RunSettings } from '../../src/schemas/run.js'
import { encodeCursor } from '../../src/storage/paging.js'
import { MAX_CALLBACKS_PER_TENANT } from '../../src/storage/erp/callback-store.js'
import { MAX_SCHEDULES_PER_TENANT, ScheduleStore } from '../../src/storage/erp/schedule-store.js'
import { Redis } from 'ioredis'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../helpers/redis.js'
import { KEY_GARDEN, KEY_HEATING, auth } from './gateway-double.js'
import { buildHostileApp, type HostileApp } from './hostile-helpers.js'

/**
 * Issue 14 finding 16: schedules and callbacks keep their rules under pressure.
 * The tag-pattern and unknown-cursor checks already held on this code (they pin it);
 * the per-tenant limits did not.
 */

let h: HostileApp
beforeAll(async () => {
  h = await buildHostileApp('erp-limits', { rateLimitMax: 1_000_000 })
})
afterAll(() => h?.close())

const post = (url: string, payload: object, key = KEY_GARDEN) => h.app.inject({ method: 'POST', url, headers: auth(key), payload })
const schedule = (extra: object = {}) => ({ cron: '0 6 * * 1', timeZone: 'Europe/Berlin', horizon: 2, scope: { all: true }, ...extra })

describe('schedules', () => {
  it('refuses a scope tag that breaks the tag pattern, naming it', async () => {
    const res = await post('/v1/schedules', schedule({ scope: { tags: ['garden', 'no spaces allowed'] } }))
    expect(res.statusCode).toBe(400)
    expect(res.json().errors).toEqual([{ path: 'scope.tags[1]', message: expect.any(String) }])
  })

  it('answers 400 naming cursor for a well-formed cursor that names no schedule', async () => {
    expect((await post('/v1/schedules', schedule())).statusCode).toBe(201)
    const res = await h.app.inject({ url: `/v1/schedules?cursor=${encodeCursor('no-such-schedule')}`, headers: auth(KEY_GARDEN) })
    expect(res.statusCode).toBe(400)
    expect(res.json().errors).toEqual([{ path: 'cursor', message: expect.any(String) }])
  })
})

// Before the fix concurrent creates all passed the count check and the tenant ended over the limit
// (120 schedules and 30 callbacks, seen failing).
describe('per-tenant limits under concurrent creates', () => {
  it('callbacks: exactly the limit is created, the rest get 409', async () => {
    const answers = await Promise.all(
      Array.from({ length: MAX_CALLBACKS_PER_TENANT + 10 }, (_, i) => post('/v1/callbacks', { url: `https://erp.example/hooks/${i}`, events: ['run.succeeded'] }, KEY_HEATING)),
    )
    expect(answers.filter((r) => r.statusCode === 201).length).toBe(MAX_CALLBACKS_PER_TENANT)
    expect(answers.filter((r) => r.statusCode === 409).length).toBe(10)
  })

  it('schedules: the store never holds more than the limit', async () => {
    const url = await redisUrlForTests()
    const prefix = uniquePrefix('erp-limits-store')
    const redis = new Redis(url, { maxRetriesPerRequest: 2 })
    try {
      const store = new ScheduleStore(redis, prefix)
      const def = { name: null, cron: '0 6 * * 1', timeZone: 'Europe/Berlin', scope: { all: true } as const, settings: RunSettings.parse({ horizon: 2 }) }
      const made = await Promise.all(Array.from({ length: MAX_SCHEDULES_PER_TENANT + 20 }, () => store.create('heating', def, new Date())))
      expect(made.filter((d) => d !== null).length).toBe(MAX_SCHEDULES_PER_TENANT)
      const page = await store.list('heating', 1000)
      expect(page.items.length).toBe(MAX_SCHEDULES_PER_TENANT)
    } finally {
      redis.disconnect()
      await deleteKeys(url, prefix)
    }
  })
})
