import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Queue } from 'bullmq'
import type { FastifyInstance } from 'fastify'
import type { Redis } from 'ioredis'
import { createAdjustmentService } from '../../src/http/adjustment-services.js'
import { createLogger } from '../../src/logger.js'
import type { RunMachinery } from '../../src/queue/gateway.js'
import { RETENTION_QUEUE, SWEEP_EVERY_MS, SWEEP_SCHEDULER } from '../../src/retention/names.js'
import { MS_PER_DAY, sweepIdleHistories, sweepTenantStep, type RetentionDeps } from '../../src/retention/sweep.js'
import { retentionDeps, startRetentionWorker } from '../../src/retention/worker.js'
import { AccuracyTrackingHistoryStore } from '../../src/storage/erp/accuracy-hook.js'
import { HistoryStore, historyKeys } from '../../src/storage/histories/history-store.js'
import { IdleHistoryIndex } from '../../src/storage/histories/idle-index.js'
import { RunStore, runStoreOptions } from '../../src/storage/runs/run-store.js'
import { startService, type TestService } from '../helpers/service.js'
import { waitFor } from '../queue/fixtures.js'

// Idle-history retention (HISTORY_IDLE_DAYS) through the real stores, app, queue and worker against
// a real Redis. Time is a fake clock given to the history store and to the sweep, never a sleep.
// Invented data (garden supplies); no forecast numbers are judged.
let service: TestService
let app: FastifyInstance
let gateway: RunMachinery
let redis: Redis
let histories: HistoryStore
let index: IdleHistoryIndex
let deps: RetentionDeps
const hookErrors: unknown[] = []

const T0 = Date.UTC(2026, 0, 5)
let clock = T0

beforeAll(async () => {
  service = await startService('history-retention', {
    config: { chunkSize: 5, workerConcurrency: 1 },
    erp: true,
    appDeps: (ctx) => {
      // As planningDeps wires them (server.ts), with the fake clock for the write times.
      const runs = new RunStore(ctx.redis, runStoreOptions(ctx.config))
      const adjustments = createAdjustmentService(ctx.config, ctx.redis, { latestForecast: (t, s) => runs.latest(t, s) })
      histories = new AccuracyTrackingHistoryStore(
        ctx.redis,
        { prefix: ctx.prefix, now: () => new Date(clock) },
        ctx.erp!.services.accuracy,
        (err) => hookErrors.push(err),
        (tenant, entries) => adjustments.historiesStored(tenant, entries),
      )
      return { adjustments, histories }
    },
  })
  ;({ app, gateway, redis } = service)
  index = new IdleHistoryIndex(redis, { prefix: service.prefix })
  deps = retentionDeps(service.config, redis)
})

afterAll(() => service?.close())

const put = (sku: string, demand: number[], tags: string[] = ['category:garden']) =>
  app.inject({ method: 'PUT', url: `/v1/skus/${sku}/history`, payload: { frequency: 'month', firstPeriod: '2024-01', demand, tags } })
const flat = (level: number, n = 24) => Array.from({ length: n }, () => level)
const status = async (url: string) => (await app.inject({ url })).statusCode
const sweep = (nowMs: number, idleDays = 30) => sweepIdleHistories(deps, ['default'], { idleDays, nowMs })
const b64 = (sku: string) => Buffer.from(sku, 'utf8').toString('base64url')

/**
 * Every key of the tenant that still names the SKU: in its key name, or as a hash field, set or
 * sorted-set member. Left out: the run's own results (kept until they expire) and the
 * adjustment audit trail (kept on purpose), as DELETE /v1/skus/{sku}/history keeps them.
 */
async function mentions(sku: string): Promise<string[]> {
  const base = `${service.prefix}:t:default:`
  const found: string[] = []
  let cursor = '0'
  do {
    const [next, keys] = await redis.scan(cursor, 'MATCH', `${base}*`, 'COUNT', 1000)
    cursor = next
    for (const key of keys) {
      const name = key.slice(base.length)
      if (name.startsWith('run:{') || name.includes(':trail:')) continue
      if (name.includes(b64(sku)) || name.includes(sku)) {
        found.push(name)
        continue
      }
      const type = await redis.type(key)
      const held =
        type === 'hash' ? (await redis.hexists(key, sku)) === 1
        : type === 'zset' ? (await redis.zscore(key, sku)) !== null
        : type === 'set' ? (await redis.sismember(key, sku)) === 1
        : false
      if (held) found.push(name)
    }
  } while (cursor !== '0')
  return found.sort()
}

/** Bytes of one SKU's history as the stored-bytes quota counts them (its data and meta fields). */
async function bytesOf(sku: string): Promise<number> {
  const k = historyKeys(service.prefix, 'default')
  return (await redis.hstrlen(k.data, sku)) + (await redis.hstrlen(k.meta, sku))
}

describe('idle-history retention', { timeout: 120_000 }, () => {
  it('removes a SKU idle past the limit with every record and counter, and keeps one written in time', async () => {
    clock = T0
    expect((await put('PRUNER-OLD', flat(40))).statusCode).toBe(201)
    expect((await put('RAKE-KEPT', flat(60))).statusCode).toBe(201)
    const run = await app.inject({ method: 'POST', url: '/v1/runs', payload: { horizon: 3, scope: { tags: ['category:garden'] } } })
    await waitFor(async () => ((await gateway.get('default', run.json().id))?.status === 'succeeded' ? true : undefined), 60_000, 'the run')
    // A day later the actuals of the first forecast month arrive (accuracy and value added records), and a planner adjusts a month.
    clock = T0 + MS_PER_DAY
    expect((await put('PRUNER-OLD', [...flat(40), 45])).statusCode).toBe(200)
    expect((await put('RAKE-KEPT', [...flat(60), 55])).statusCode).toBe(200)
    const adjusted = await app.inject({
      method: 'POST',
      url: '/v1/skus/PRUNER-OLD/adjustments',
      payload: { periods: ['2026-03'], setDemand: 50, reason: 'garden centre promotion', author: 'dana' },
    })
    expect(adjusted.statusCode).toBeLessThan(300)
    // RAKE-KEPT is written again on day 20.
    clock = T0 + 20 * MS_PER_DAY
    expect((await put('RAKE-KEPT', [...flat(60), 55, 58])).statusCode).toBe(200)
    expect(hookErrors).toEqual([])

    const k = historyKeys(service.prefix, 'default')
    // Not vacuous: before the sweep, the SKU is held in each kind of record the delete must reach.
    const before = await mentions('PRUNER-OLD')
    for (const kind of ['latest', 'published', 'acc:summary', `acc:p:${b64('PRUNER-OLD')}`, `fva:${b64('PRUNER-OLD')}`, `adj:{default}:set:${b64('PRUNER-OLD')}`]) {
      expect(before).toContain(kind)
    }
    expect(before).toContain('hist:{default}:written')
    expect(await histories.count('default')).toBe(2)
    expect(await histories.storedBytes('default')).toBe((await bytesOf('PRUNER-OLD')) + (await bytesOf('RAKE-KEPT')))
    const keptBytes = await bytesOf('RAKE-KEPT')

    // 30 days after its last write, less a millisecond: not idle yet, nothing goes.
    const lastWrite = T0 + MS_PER_DAY
    const early = await sweep(lastWrite + 30 * MS_PER_DAY - 1)
    expect(early.removed.size).toBe(0)
    expect(await histories.count('default')).toBe(2)

    // Exactly 30 days: idle ("at or before the cutoff"); RAKE-KEPT, written on day 20, stays.
    const due = await sweep(lastWrite + 30 * MS_PER_DAY)
    expect(due.removed).toEqual(new Map([['default', 1]]))
    for (const path of ['history', 'forecast', 'accuracy']) expect(await status(`/v1/skus/PRUNER-OLD/${path}`)).toBe(404)
    for (const path of ['history', 'forecast', 'accuracy']) expect(await status(`/v1/skus/RAKE-KEPT/${path}`)).toBe(200)
    expect(await mentions('PRUNER-OLD')).toEqual([])
    // The counters drop with it: the SKU count, the stored bytes and the tag's SKU count.
    expect(await histories.count('default')).toBe(1)
    expect(await histories.storedBytes('default')).toBe(keptBytes)
    expect((await app.inject({ url: '/v1/tags' })).json().items).toEqual([{ tag: 'category:garden', skus: 1 }])
    expect(await redis.scard(k.removed)).toBe(0)
    expect(await index.lastWrites('default', ['RAKE-KEPT'])).toEqual([T0 + 20 * MS_PER_DAY])
  })

  it('a write landing between the sweep reading a SKU as idle and deleting it wins', async () => {
    clock = T0 + 40 * MS_PER_DAY
    expect((await put('SHEARS-RACE', flat(12))).statusCode).toBe(201)
    const sweepAt = clock + 31 * MS_PER_DAY
    const racing: RetentionDeps = {
      ...deps,
      index: {
        removed: (t, n) => deps.index.removed(t, n),
        backfill: (t, now, n) => deps.index.backfill(t, now, n),
        forgotten: (t, skus) => deps.index.forgotten(t, skus),
        idle: async (tenant, cutoff, limit) => {
          const idle = await deps.index.idle(tenant, cutoff, limit)
          // The ERP sends the SKU's history after the sweep has read the candidates.
          clock = sweepAt
          expect((await put('SHEARS-RACE', [...flat(12), 3])).statusCode).toBe(200)
          return idle
        },
      },
    }
    const step = await sweepTenantStep(racing, 'default', { idleDays: 30, nowMs: sweepAt })
    // RAKE-KEPT, last written on day 20, is idle by now and goes; SHEARS-RACE was written meanwhile and stays.
    expect(step).toMatchObject({ removed: 1, kept: 1 })
    expect(await status('/v1/skus/RAKE-KEPT/history')).toBe(404)
    const history = (await app.inject({ url: '/v1/skus/SHEARS-RACE/history' })).json()
    expect(history.demand).toEqual([...flat(12), 3])
    expect(await index.lastWrites('default', ['SHEARS-RACE'])).toEqual([sweepAt])
  })

  it('histories stored before the last-write index count as written when the sweep first sees them, never as idle', async () => {
    clock = T0 + 100 * MS_PER_DAY
    expect((await put('TROWEL-LEGACY', flat(8))).statusCode).toBe(201)
    // As a store of the version before: no last-write times and no backfill yet.
    const k = historyKeys(service.prefix, 'default')
    await redis.del(k.written, k.writtenBackfill)
    const firstSeen = T0 + 1000 * MS_PER_DAY
    const first = await sweep(firstSeen)
    expect(first.removed.size).toBe(0)
    expect(await histories.count('default')).toBe(2)
    expect(await index.lastWrites('default', ['SHEARS-RACE', 'TROWEL-LEGACY'])).toEqual([firstSeen, firstSeen])
    // 30 days after the sweep first saw them, both are idle.
    const later = await sweep(firstSeen + 30 * MS_PER_DAY)
    expect(later.removed).toEqual(new Map([['default', 2]]))
    expect(await histories.count('default')).toBe(0)
    expect(await histories.storedBytes('default')).toBe(0)
  })

  it('a closing that carries a SKU forward with zeros does not make it active: a SKU with only closings goes idle', async () => {
    clock = T0 + 2000 * MS_PER_DAY
    expect((await put('EDGER-DROPPED', flat(24))).statusCode).toBe(201)
    // 25 days on, the month is closed: the history is carried forward with zeros, its last write stays.
    clock += 25 * MS_PER_DAY
    const closed = await app.inject({ method: 'PUT', url: '/v1/closed-periods/month', payload: { closedThrough: '2026-03' } })
    expect(closed.statusCode).toBe(200)
    expect((await app.inject({ url: '/v1/skus/EDGER-DROPPED/history' })).json().demand).toEqual([...flat(24), 0, 0, 0])
    expect(await index.lastWrites('default', ['EDGER-DROPPED'])).toEqual([T0 + 2000 * MS_PER_DAY])
    // 30 days after its last upload, not after the closing, it is idle.
    const due = await sweep(T0 + 2030 * MS_PER_DAY)
    expect(due.removed).toEqual(new Map([['default', 1]]))
    expect(await status('/v1/skus/EDGER-DROPPED/history')).toBe(404)
  })

  it('sweeps tenants in turn, a bounded batch each, so a large backlog does not hold up a small one', async () => {
    const store = new HistoryStore(redis, { prefix: service.prefix, now: () => new Date(clock) })
    clock = T0
    const data = { frequency: 'month' as const, firstPeriod: '2025-01', demand: [1, 2, 3], tags: [] }
    for (let i = 0; i < 7; i++) await store.put('garden', `SEED-${i}`, data)
    for (let i = 0; i < 2; i++) await store.put('heating', `VALVE-${i}`, data)
    const order: string[] = []
    const watched: RetentionDeps = {
      ...deps,
      histories: {
        deleteIfIdle: async (tenant, sku, cutoff) => {
          order.push(tenant)
          return deps.histories.deleteIfIdle(tenant, sku, cutoff)
        },
      },
    }
    const outcome = await sweepIdleHistories(watched, ['garden', 'heating'], { idleDays: 30, nowMs: T0 + 60 * MS_PER_DAY, batchSize: 2 })
    expect(outcome.removed).toEqual(new Map([['garden', 7], ['heating', 2]]))
    // heating's two SKUs go in the first round, between garden's first and second batch.
    expect(order.slice(0, 5)).toEqual(['garden', 'garden', 'heating', 'heating', 'garden'])
    expect(await store.count('garden')).toBe(0)
    expect(await store.count('heating')).toBe(0)
  })

  it('never sweeps with 0 idle days, the setting that means "keep forever"', async () => {
    await expect(sweepTenantStep(deps, 'default', { idleDays: 0, nowMs: Date.now() })).rejects.toThrow(/at least 1 day/)
  })

  it('the worker process sweeps through a BullMQ job scheduler when HISTORY_IDLE_DAYS is set, and removes it (deleting nothing) at 0', async () => {
    clock = T0
    expect((await put('HOE-SCHEDULED', flat(6))).statusCode).toBe(201)
    const connection = redis.duplicate()
    const queue = new Queue(RETENTION_QUEUE, { connection, prefix: service.prefix })
    const logger = createLogger({ level: 'silent' })
    try {
      // Off: no schedule, no job, the SKU (idle for most of a year by the real clock) stays.
      const off = startRetentionWorker({ ...service.config, historyIdleDays: 0 }, logger)
      await off.close()
      expect(await queue.getJobSchedulers()).toEqual([])
      expect(await queue.getJobCountByTypes('waiting', 'delayed', 'active', 'completed')).toBe(0)
      expect(await status('/v1/skus/HOE-SCHEDULED/history')).toBe(200)

      // On: the scheduler fires at once and then every hour; the real clock is far past T0 + 30 days.
      const on = startRetentionWorker({ ...service.config, historyIdleDays: 30 }, logger)
      try {
        await waitFor(async () => ((await status('/v1/skus/HOE-SCHEDULED/history')) === 404 ? true : undefined), 30_000, 'the scheduled sweep')
        const schedulers = await queue.getJobSchedulers()
        expect(schedulers.map((s) => [s.key, s.every])).toEqual([[SWEEP_SCHEDULER, SWEEP_EVERY_MS]])
      } finally {
        await on.close()
      }
      // Turned off again: the schedule goes, for every process.
      await startRetentionWorker({ ...service.config, historyIdleDays: 0 }, logger).close()
      expect(await queue.getJobSchedulers()).toEqual([])
    } finally {
      await queue.close()
      connection.disconnect()
    }
  })
})
