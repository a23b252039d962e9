import { randomUUID } from 'node:crypto'
import { Queue } from 'bullmq'
import { queuePrefix, type Config } from '../config.js'
import { logErrors, type Logger } from '../logger.js'
import type { RunGateway, RunRecord } from '../runs/contract.js'
import { runFailure } from '../runs/failures.js'
import { checkInlineOptions, checkRunOptions, checkUniqueSkus, emptyScopeError } from '../runs/input.js'
import type { RunRequest } from '../schemas/run.js'
import { closeSteps } from '../shutdown.js'
import { HistoryStore } from '../storage/histories/history-store.js'
import { ClosingStore } from '../storage/erp/closing-store.js'
import { requestConnection } from '../storage/redis.js'
import { createRunFromHistories } from '../storage/runs/history-runs.js'
import { resultsPageJson } from '../storage/runs/result-pages.js'
import { RunStore, runStoreOptions } from '../storage/runs/run-store.js'
import { PublishedReads } from '../storage/runs/published-reads.js'
import { FairShare } from '../storage/runs/fair-share.js'
import { createRunEventEmitter } from '../callbacks/emitter.js'
import { CHUNK_JOB, CHUNK_JOB_OPTIONS, CHUNK_QUEUE, chunkJobId, DEFAULT_EXPRESS_MAX_SERIES, EXPRESS_CHUNK_QUEUE } from './names.js'
import type { ChunkJob } from './payload.js'

export interface RunMachinery extends RunGateway {
  /** Closes the queue and the Redis connection it opened. */
  close(): Promise<void>
}

const BATCH = 500

/**
 * The RunGateway over BullMQ and the Redis run store. `submit` stores the
 * run record and the chunk inputs, then enqueues one small job per chunk.
 * It opens its own Redis connection and closes it in `close`.
 */
export function createRunGateway(config: Config, deps: { readonly logger: Logger; readonly now?: () => Date }): RunMachinery {
  const now = deps.now ?? (() => new Date())
  const log = deps.logger.child({ component: 'run-gateway' })
  const redis = requestConnection(config, log, 'run-gateway')
  const store = new RunStore(redis, runStoreOptions(config))
  const published = new PublishedReads(redis, config.redisPrefix)
  const queue = new Queue<ChunkJob>(CHUNK_QUEUE, { connection: redis, prefix: queuePrefix(config) })
  logErrors(queue, log, 'chunk queue')
  const expressQueue = new Queue<ChunkJob>(EXPRESS_CHUNK_QUEUE, { connection: redis, prefix: queuePrefix(config) })
  logErrors(expressQueue, log, 'express chunk queue')
  const expressMaxSeries = config.expressMaxSeries ?? DEFAULT_EXPRESS_MAX_SERIES
  /** Small runs take the express lane (names.ts), with fair shares of its own. */
  const lanes = {
    main: { queue, fair: new FairShare(redis, queuePrefix(config), CHUNK_QUEUE) },
    express: { queue: expressQueue, fair: new FairShare(redis, queuePrefix(config), EXPRESS_CHUNK_QUEUE) },
  }
  const laneFor = (series: number) => (series <= expressMaxSeries ? lanes.express : lanes.main)
  const events = createRunEventEmitter(redis, queuePrefix(config), log)

  const chunkIndexes = (n: number) => Array.from({ length: n }, (_, i) => i)
  const histories = new HistoryStore(redis, { prefix: config.redisPrefix })
  const closing = new ClosingStore(redis, config.redisPrefix)

  /**
   * Enqueues one job per stored chunk, in batches; on failure the run is ended
   * as failed. Each chunk's priority comes from the tenant's fair share
   * (storage/runs/fair-share.ts), so a small run is not queued behind a large
   * run of another tenant.
   */
  async function enqueueChunks(tenant: string, runId: string, chunks: number, series: number): Promise<void> {
    try {
      const { queue, fair } = laneFor(series)
      const c = await queue.getJobCounts('prioritized', 'waiting', 'delayed')
      const idle = (c.prioritized ?? 0) + (c.waiting ?? 0) + (c.delayed ?? 0) === 0
      const priorities = await fair.reserve(tenant, chunks, idle)
      for (let i = 0; i < chunks; i += BATCH) {
        await queue.addBulk(
          chunkIndexes(Math.min(BATCH, chunks - i)).map((j) => ({
            name: CHUNK_JOB,
            data: { tenant, runId, chunkIndex: i + j },
            opts: { ...CHUNK_JOB_OPTIONS, jobId: chunkJobId(runId, i + j), priority: priorities[i + j]! },
          })),
        )
      }
    } catch (err) {
      await store
        .endRun(tenant, runId, 'failed', runFailure('enqueue-failed', 'could not enqueue the run'), now())
        .catch((e: unknown) => log.error({ err: e, tenant, runId }, 'could not mark the run failed after enqueueing failed'))
      throw err
    }
  }

  return {
    async submit(tenant: string, request: RunRequest): Promise<RunRecord> {
      checkRunOptions(request)
      checkUniqueSkus(request.series)
      checkInlineOptions(request)
      const runId = randomUUID()
      // Inline series are a what-if unless the caller asks to publish them.
      const { record, chunks } = await store.createRun(tenant, runId, { ...request, publish: request.publish ?? false }, config.chunkSize, now())
      await enqueueChunks(tenant, runId, chunks, request.series.length)
      return record
    },

    chunkSize: config.chunkSize,

    async submitPrepared(tenant, settings, total, inputs) {
      const runId = randomUUID()
      // Inline series are a what-if unless the caller asks to publish them.
      const { record, chunks } = await store.createRunFromInputs(tenant, runId, { ...settings, publish: settings.publish ?? false }, total, inputs, now())
      await enqueueChunks(tenant, runId, chunks, total)
      return record
    },

    async submitScope(tenant, settings, scope, origin = { kind: 'scope' }) {
      checkRunOptions(settings)
      const runId = randomUUID()
      const created = await createRunFromHistories(redis, runStoreOptions(config), histories, {
        tenant,
        runId,
        // Runs over stored histories (and so schedules) publish unless told not to.
        settings: { ...settings, publish: settings.publish ?? true },
        scope,
        chunkSize: config.chunkSize,
        now: now(),
        closed: await closing.ordinals(tenant),
        origin,
      })
      if (created === null) throw emptyScopeError(scope)
      if (created.openOnlySkus > 0) log.info({ tenant, runId, openOnlySkus: created.openOnlySkus }, 'SKUs with only open periods left out of the run')
      await enqueueChunks(tenant, runId, created.chunks, created.record.progress.total)
      return { record: created.record, missingSkus: created.missingSkus }
    },

    get: (tenant, runId) => store.getRun(tenant, runId),

    listRuns: (tenant, filter, page) => store.listRuns(tenant, filter, page),

    results: (tenant, runId, page) => store.resultsPage(tenant, runId, page),

    resultsJson: (tenant, runId, page) => resultsPageJson(redis, config.redisPrefix, tenant, runId, page),

    async cancel(tenant, runId) {
      const before = await store.getRun(tenant, runId)
      if (before === null || (before.status !== 'queued' && before.status !== 'running')) return before
      const after = await store.endRun(tenant, runId, 'cancelled', null, now())
      if (after?.status === 'cancelled') {
        const all = chunkIndexes(await store.chunkCount(tenant, runId))
        for (let i = 0; i < all.length; i += BATCH) {
          // Active (locked) chunks cannot be removed; their workers see the cancelled status and skip them.
          const ids = all.slice(i, i + BATCH).map((c) => chunkJobId(runId, c))
          await Promise.allSettled([...ids.map((id) => queue.remove(id)), ...ids.map((id) => expressQueue.remove(id))])
        }
        await store.deleteChunkInputs(tenant, runId, all)
        await events.runEnded(tenant, runId)
      }
      return after
    },

    latestForecast: (tenant, sku) => store.latest(tenant, sku),

    async scanPublished(tenant, cursor, count) {
      const scanned = await published.scanLatest(tenant, cursor, count)
      const forecasts = await published.latestOf(tenant, scanned.records)
      return { forecasts: forecasts.filter((f): f is NonNullable<typeof f> => f !== null), cursor: scanned.cursor }
    },

    async publishedOf(tenant, skus) {
      const records = await published.latestRecords(tenant, skus)
      const found = skus.flatMap((sku, i) => (records[i] ? [[sku, records[i]] as const] : []))
      const forecasts = await published.latestOf(tenant, found)
      const bySku = new Map(found.map(([sku], i) => [sku, forecasts[i] ?? null]))
      return skus.map((sku) => bySku.get(sku) ?? null)
    },
    forgetLatestForecast: (tenant, sku) => store.forgetLatest(tenant, sku),

    async ping() {
      await redis.ping()
    },

    async stats() {
      const [main, express, runs, fits] = await Promise.all([
        queue.getJobCounts('waiting', 'prioritized', 'active', 'delayed', 'failed'),
        expressQueue.getJobCounts('waiting', 'prioritized', 'active', 'delayed', 'failed'),
        store.stats.runs(),
        store.stats.fits(),
      ])
      const n = (state: string) => (main[state] ?? 0) + (express[state] ?? 0)
      // Chunks carry fair-share priorities, so BullMQ keeps the waiting ones as 'prioritized'.
      return { waiting: n('waiting') + n('prioritized'), active: n('active'), delayed: n('delayed'), failed: n('failed'), runs, fits }
    },

    close: () =>
      closeSteps(log, [
        ['run events queue', () => events.close()],
        ['chunk queue', () => queue.close()],
        ['express chunk queue', () => expressQueue.close()],
        ['Redis connection run-gateway', () => redis.quit()],
      ]),
  }
}
