import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import type { Redis } from 'ioredis'
import { createLogger } from '../../src/logger.js'
import type { RunMachinery } from '../../src/queue/gateway.js'
import { createFireHandler } from '../../src/schedules/fire.js'
import { HistoryStore } from '../../src/storage/histories/history-store.js'
import { ScheduleStore } from '../../src/storage/erp/schedule-store.js'
import { type RunRecord } from '../../src/runs/contract.js'
import { startService, type ErpMachinery, type TestService } from '../helpers/service.js'
import { syntheticSeries, waitFor } from '../queue/fixtures.js'
import { RunInputError } from '../../src/runs/input.js'

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
  scope: { tags: ['category:garden'] },
  horizon: 6,
}

describe('schedules over HTTP', () => {
  let id: string

  it('creates a schedule: 201, Location, defaults applied, next firing in its time zone', async () => {
    const res = await app.inject({ method: 'POST', url: '/v1/schedules', payload: nightly })
    expect(res.statusCode).toBe(201)
    const body = res.json()
    id = body.id
    expect(res.headers.location).toBe(`/v1/schedules/${id}`)
    expect(body).toMatchObject({ name: 'garden nightly', cron: '0 2 * * *', timeZone: 'Europe/Berlin', scope: { tags: ['category:garden'] } })
    expect(body).toMatchObject({ horizon: 6, frequency: 'month', rankBy: 'mase' })
    expect(body.firings).toEqual({ submitted: 0, skipped: 0, failed: 0, missingSkus: 0, lastFiredAt: null, currentRunId: null, lastFailure: null })
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

  it('refuses a bad pattern, time zone, lead time, scope and unknown field with field errors', async () => {
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
      payload: { ...nightly, horizon: 2, replenishment: { leadTimePeriods: 3, serviceLevel: 0.95 } },
    })
    expect(lead.statusCode).toBe(400)
    expect(lead.json().errors[0].path).toBe('replenishment.leadTimePeriods')
    const scope = await app.inject({ method: 'POST', url: '/v1/schedules', payload: { ...nightly, scope: { all: false } } })
    expect(scope.statusCode).toBe(400)
    expect(scope.json().errors[0].path).toBe('scope.all')
    const old = await app.inject({ method: 'POST', url: '/v1/schedules', payload: { ...nightly, selection: { all: true } } })
    expect(old.statusCode).toBe(400)
    expect(old.json().errors).toEqual([{ path: 'selection', message: 'is not a field of this request' }])
  })

  it('refuses SKUs without a stored history at creation, listing each, as runs do', async () => {
    await app.inject({ method: 'PUT', url: '/v1/skus/KNOWN-1/history', payload: { frequency: 'month', firstPeriod: '2024-01', demand: [1, 2, 3] } })
    const res = await app.inject({ method: 'POST', url: '/v1/schedules', payload: { ...nightly, scope: { skus: ['KNOWN-1', 'GHOST-1', 'KNOWN-1'] } } })
    expect(res.statusCode).toBe(400)
    expect(res.json().errors).toEqual([
      { path: 'scope.skus[1]', message: 'no stored history for SKU "GHOST-1"' },
      { path: 'scope.skus[2]', message: 'SKU "KNOWN-1" is also scope.skus[0]' },
    ])
  })

  it('pages the list and refuses a cursor it did not issue', async () => {
    const extra = await app.inject({ method: 'POST', url: '/v1/schedules', payload: { ...nightly, name: 'second' } })
    const first = (await app.inject({ url: '/v1/schedules?limit=1' })).json()
    expect(first.items).toHaveLength(1)
    const second = (await app.inject({ url: `/v1/schedules?limit=1&cursor=${first.nextCursor}` })).json()
    expect(second.items.map((s: { id: string }) => s.id)).toEqual([extra.json().id])
    expect(second.nextCursor).toBeNull()
    const bad = await app.inject({ url: '/v1/schedules?cursor=bm9wZQ.abcdefgh' })
    expect(bad.statusCode).toBe(400)
    expect(bad.json().errors).toEqual([{ path: 'cursor', message: 'cursor is not one this service issued' }])
    await app.inject({ method: 'DELETE', url: `/v1/schedules/${extra.json().id}` })
  })

  it('deletes it with its job scheduler', async () => {
    expect((await app.inject({ method: 'DELETE', url: `/v1/schedules/${id}` })).statusCode).toBe(204)
    expect((await app.inject({ url: `/v1/schedules/${id}` })).statusCode).toBe(404)
    expect((await app.inject({ method: 'DELETE', url: `/v1/schedules/${id}` })).statusCode).toBe(404)
    expect(await erp.services.schedules['queue']().getJobScheduler(`default.${id}`)).toBeUndefined()
  })
})

describe('a schedule firing', { timeout: 120_000 }, () => {
  it('submits a run over the stored histories of its scope (every-second pattern)', async () => {
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
      return s.firings.submitted >= 1 ? s : undefined
    }, 30_000, 'the schedule to fire')
    await app.inject({ method: 'DELETE', url: `/v1/schedules/${sid}` })
    const run = await waitFor(async () => {
      const r = await gateway.get('default', fired.firings.currentRunId)
      return r && r.status !== 'queued' && r.status !== 'running' ? r : undefined
    }, 60_000, 'the scheduled run to finish')
    expect(run.status).toBe('succeeded')
    expect(run.progress.total).toBe(3)
    const page = await gateway.results('default', run.id, { limit: 10 })
    expect(page!.items.map((i) => i.sku)).toEqual(['SEED-00000', 'SEED-00001', 'SEED-00002'])
    expect(run.scope).toEqual({ tags: ['category:garden'] })
    expect(fired.firings.failed).toBe(0)
  })
})

describe('the fire handler', () => {
  const logger = createLogger({ level: 'silent' })
  const record = (id: string, status: RunRecord['status']) => ({ id, status, progress: { total: 1, done: 0, failed: 0 } }) as RunRecord

  it('skips while the previous run is queued or running, counts it, and fires again once it ended', async () => {
    const store = new ScheduleStore(redis, prefix)
    const def = await store.create('garden', { name: null, cron: nightly.cron, timeZone: nightly.timeZone, scope: { all: true }, settings: { horizon: 3 } as never }, new Date())
    const status = new Map<string, RunRecord['status']>()
    const submitted: string[] = []
    const fire = createFireHandler({
      schedules: store,
      getRun: async (_t, runId) => (status.has(runId) ? record(runId, status.get(runId)!) : null),
      submit: async () => {
        const id = `run-${submitted.length + 1}`
        submitted.push(id)
        status.set(id, 'queued')
        return { record: record(id, 'queued'), missingSkus: submitted.length }
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
    const firings = (await store.get('garden', def!.id))!.firings
    // missingSkus adds up what each firing reported (1, then 2): SKUs deleted since the schedule was made.
    expect(firings).toMatchObject({ currentRunId: 'run-2', submitted: 2, skipped: 2, failed: 0, missingSkus: 3 })
  })

  it('counts a failed submit and removes the scheduler of a deleted schedule', async () => {
    const store = new ScheduleStore(redis, prefix)
    const def = await store.create('garden', { name: null, cron: nightly.cron, timeZone: nightly.timeZone, scope: { skus: ['NOPE'] }, settings: { horizon: 3 } as never }, new Date())
    const removed: string[] = []
    const fire = createFireHandler({
      schedules: store,
      getRun: async () => null,
      submit: async () => {
        throw new RunInputError('empty-scope', 'the scope matches no stored history', 'scope.skus')
      },
      removeScheduler: async (_t, id) => removed.push(id),
      logger,
    })
    const failure = { code: 'empty-scope', message: 'the scope matches no stored history' }
    expect(await fire({ tenant: 'garden', scheduleId: def!.id })).toEqual({ outcome: 'failed', failure })
    expect((await store.get('garden', def!.id))!.firings).toMatchObject({ failed: 1, lastFailure: failure })
    await store.remove('garden', def!.id)
    expect(await fire({ tenant: 'garden', scheduleId: def!.id })).toEqual({ outcome: 'gone' })
    expect(removed).toEqual([def!.id])
  })
})
