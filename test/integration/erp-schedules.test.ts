import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import type { Redis } from 'ioredis'
import { createLogger } from '../../src/logger.js'
import type { RunMachinery } from '../../src/queue/gateway.js'
import { createFireHandler } from '../../src/schedules/fire.js'
import { HistoryStore } from '../../src/storage/history-store.js'
import { ScheduleStore } from '../../src/storage/schedule-store.js'
import type { RunRecord } from '../../src/storage/types.js'
import { startService, type ErpMachinery, type TestService } from '../helpers/service.js'
import { syntheticSeries, waitFor } from '../queue/fixtures.js'

// Schedules through the real app, Redis, BullMQ job schedulers and workers.
let service: TestService
let prefix: string
let app: FastifyInstance
let gateway: RunMachinery
let redis: Redis
let erp: ErpMachinery

beforeAll(async () => {
  service = await startService('erp-schedules', {
    config: { chunkSize: 5, workerConcurrency: 1, scheduleMinIntervalSeconds: 1 },
    erp: true,
    appDeps: (ctx) => ({ histories: new HistoryStore(ctx.redis, { prefix: ctx.prefix }) }),
  })
  ;({ prefix, app, gateway, redis } = service)
  erp = service.erp!
})

afterAll(() => service?.close())

const nightly = {
  name: 'garden nightly',
  cron: '0 2 * * *',
  timeZone: 'Europe/Berlin',
  selection: { tags: ['category:garden'] },
  settings: { horizon: 6 },
}

describe('schedules over HTTP', () => {
  let id: string

  it('creates a schedule: 201, Location, defaults applied, next firing in its time zone', async () => {
    const res = await app.inject({ method: 'POST', url: '/v1/schedules', payload: nightly })
    expect(res.statusCode).toBe(201)
    const body = res.json()
    id = body.id
    expect(res.headers.location).toBe(`/v1/schedules/${id}`)
    expect(body).toMatchObject({ name: 'garden nightly', cron: '0 2 * * *', timeZone: 'Europe/Berlin', selection: { tags: ['category:garden'] } })
    expect(body.settings).toMatchObject({ horizon: 6, frequency: 'month', rankBy: 'mase' })
    expect(body.state).toEqual({ currentRunId: null, lastFiredAt: null, fired: 0, skipped: 0, failed: 0, lastError: null })
    // 02:00 in Berlin is 01:00 or 00:00 UTC depending on daylight saving.
    expect(body.nextFireAt).toMatch(/T0[01]:00:00\.000Z$/)
    const scheduler = await erp.services.schedules['queue']().getJobScheduler(`default.${id}`)
    expect(scheduler).toMatchObject({ pattern: '0 2 * * *', tz: 'Europe/Berlin' })
  })

  it('lists and reads it; another tenant does not see it', async () => {
    const list = (await app.inject({ url: '/v1/schedules' })).json()
    expect(list.items.map((s: { id: string }) => s.id)).toEqual([id])
    expect(list.nextCursor).toBeNull()
    expect((await app.inject({ url: `/v1/schedules/${id}` })).json().id).toBe(id)
    expect(await erp.services.schedules.get('heating', id)).toBeNull()
  })

  it('refuses a bad pattern, time zone, lead time and selection with field errors', async () => {
    const bad = await app.inject({
      method: 'POST',
      url: '/v1/schedules',
      payload: { ...nightly, cron: '0 2 * *', timeZone: 'Europe/Atlantis' },
    })
    expect(bad.statusCode).toBe(400)
    expect(bad.json().errors).toEqual([{ path: 'timeZone', message: 'must be an IANA time zone such as Europe/Berlin or UTC' }])
    const cron = await app.inject({ method: 'POST', url: '/v1/schedules', payload: { ...nightly, cron: '61 2 * * *' } })
    expect(cron.json().errors[0].path).toBe('cron')
    const lead = await app.inject({
      method: 'POST',
      url: '/v1/schedules',
      payload: { ...nightly, settings: { horizon: 2, replenishment: { leadTimePeriods: 3, serviceLevel: 0.95 } } },
    })
    expect(lead.statusCode).toBe(400)
    expect(lead.json().errors[0].path).toBe('settings.replenishment.leadTimePeriods')
    const sel = await app.inject({ method: 'POST', url: '/v1/schedules', payload: { ...nightly, selection: { all: false } } })
    expect(sel.statusCode).toBe(400)
    expect(sel.json().errors[0].path).toMatch(/^selection/)
  })

  it('deletes it with its job scheduler', async () => {
    expect((await app.inject({ method: 'DELETE', url: `/v1/schedules/${id}` })).statusCode).toBe(204)
    expect((await app.inject({ url: `/v1/schedules/${id}` })).statusCode).toBe(404)
    expect((await app.inject({ method: 'DELETE', url: `/v1/schedules/${id}` })).statusCode).toBe(404)
    expect(await erp.services.schedules['queue']().getJobScheduler(`default.${id}`)).toBeUndefined()
  })
})

describe('a schedule firing', { timeout: 120_000 }, () => {
  it('submits a run over the selected stored histories (every-second pattern)', async () => {
    for (const s of syntheticSeries(3, 30, 'SEED')) {
      const res = await app.inject({
        method: 'PUT',
        url: `/v1/skus/${s.sku}/history`,
        payload: { frequency: 'month', firstPeriod: '2023-07', demand: s.demand, tags: ['category:garden'] },
      })
      expect(res.statusCode).toBe(201)
    }
    const created = await app.inject({
      method: 'POST',
      url: '/v1/schedules',
      payload: { ...nightly, cron: '* * * * * *', timeZone: 'UTC' },
    })
    expect(created.statusCode).toBe(201)
    const sid = created.json().id as string
    const fired = await waitFor(async () => {
      const s = (await app.inject({ url: `/v1/schedules/${sid}` })).json()
      return s.state.fired >= 1 ? s : undefined
    }, 30_000, 'the schedule to fire')
    await app.inject({ method: 'DELETE', url: `/v1/schedules/${sid}` })
    const run = await waitFor(async () => {
      const r = await gateway.get('default', fired.state.currentRunId)
      return r && r.status !== 'queued' && r.status !== 'running' ? r : undefined
    }, 60_000, 'the scheduled run to finish')
    expect(run.status).toBe('succeeded')
    expect(run.progress.total).toBe(3)
    const page = await gateway.results('default', run.id, { limit: 10 })
    expect(page!.items.map((i) => i.sku)).toEqual(['SEED-00000', 'SEED-00001', 'SEED-00002'])
    expect(fired.state.failed).toBe(0)
  })
})

describe('the fire handler', () => {
  const logger = createLogger({ level: 'silent' })
  const record = (id: string, status: RunRecord['status']) => ({ id, status, progress: { total: 1, done: 0, failed: 0 } }) as RunRecord

  it('skips while the previous run is queued or running, counts it, and fires again once it ended', async () => {
    const store = new ScheduleStore(redis, prefix)
    const def = await store.create('garden', { ...nightly, name: null, selection: { all: true }, settings: { horizon: 3 } as never }, new Date())
    const status = new Map<string, RunRecord['status']>()
    const submitted: string[] = []
    const fire = createFireHandler({
      schedules: store,
      getRun: async (_t, runId) => (status.has(runId) ? record(runId, status.get(runId)!) : null),
      submit: async () => {
        const id = `run-${submitted.length + 1}`
        submitted.push(id)
        status.set(id, 'queued')
        return record(id, 'queued')
      },
      removeScheduler: async () => undefined,
      logger,
    })
    const data = { tenant: 'garden', scheduleId: def!.id }
    expect(await fire(data)).toEqual({ outcome: 'submitted', runId: 'run-1' })
    expect(await fire(data)).toEqual({ outcome: 'skipped', runId: 'run-1' })
    status.set('run-1', 'running')
    expect(await fire(data)).toEqual({ outcome: 'skipped', runId: 'run-1' })
    status.set('run-1', 'succeeded')
    expect(await fire(data)).toEqual({ outcome: 'submitted', runId: 'run-2' })
    expect(submitted).toEqual(['run-1', 'run-2'])
    const state = (await store.get('garden', def!.id))!.state
    expect(state).toMatchObject({ currentRunId: 'run-2', fired: 2, skipped: 2, failed: 0 })
  })

  it('counts a failed submit and removes the scheduler of a deleted schedule', async () => {
    const store = new ScheduleStore(redis, prefix)
    const def = await store.create('garden', { ...nightly, name: null, selection: { skus: ['NOPE'] }, settings: { horizon: 3 } as never }, new Date())
    const removed: string[] = []
    const fire = createFireHandler({
      schedules: store,
      getRun: async () => null,
      submit: async () => {
        throw new Error('the selection matches no stored history')
      },
      removeScheduler: async (_t, id) => removed.push(id),
      logger,
    })
    expect(await fire({ tenant: 'garden', scheduleId: def!.id })).toEqual({ outcome: 'failed', error: 'the selection matches no stored history' })
    expect((await store.get('garden', def!.id))!.state).toMatchObject({ failed: 1, lastError: 'the selection matches no stored history' })
    await store.remove('garden', def!.id)
    expect(await fire({ tenant: 'garden', scheduleId: def!.id })).toEqual({ outcome: 'gone' })
    expect(removed).toEqual([def!.id])
  })
})
