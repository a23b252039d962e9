import { randomUUID } from 'node:crypto'
import { Queue } from 'bullmq'
import { queuePrefix, type Config } from '../config.js'
import { logErrors, type Logger } from '../logger.js'
import type { RunGateway, RunRecord } from '../runs/contract.js'
import { runFailure } from '../runs/failures.js'
import { checkRunOptions, checkUniqueSkus, emptyScopeError } from '../runs/input.js'
import type { RunRequest } from '../schemas/run.js'
import { closeSteps } from '../shutdown.js'
import { HistoryStore } from '../storage/histories/history-store.js'
import { requestConnection } from '../storage/redis.js'
import { createRunFromHistories } from '../storage/runs/history-runs.js'
import { resultsPageJson } from '../storage/runs/result-pages.js'
import { RunStore, runStoreOptions } from '../storage/runs/run-store.js'
import { createRunEventEmitter } from '../callbacks/emitter.js'
import { CHUNK_JOB, CHUNK_JOB_OPTIONS, CHUNK_QUEUE, chunkJobId } from './names.js'
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
  const queue = new Queue<ChunkJob>(CHUNK_QUEUE, { connection: redis, prefix: queuePrefix(config) })
  logErrors(queue, log, 'chunk queue')
  const events = createRunEventEmitter(redis, queuePrefix(config), log)

  const chunkIndexes = (n: number) => Array.from({ length: n }, (_, i) => i)
  const histories = new HistoryStore(redis, { prefix: config.redisPrefix })

  /** Enqueues one job per stored chunk, in batches; on failure the run is ended as failed. */
  async function enqueueChunks(tenant: string, runId: string, chunks: number): Promise<void> {
    try {
      for (let i = 0; i < chunks; i += BATCH) {
        await queue.addBulk(
          chunkIndexes(Math.min(BATCH, chunks - i)).map((j) => ({
            name: CHUNK_JOB,
            data: { tenant, runId, chunkIndex: i + j },
            opts: { ...CHUNK_JOB_OPTIONS, jobId: chunkJobId(runId, i + j) },
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
      const runId = randomUUID()
      const { record, chunks } = await store.createRun(tenant, runId, request, config.chunkSize, now())
      await enqueueChunks(tenant, runId, chunks)
      return record
    },

    async submitScope(tenant, settings, scope) {
      checkRunOptions(settings)
      const runId = randomUUID()
      const created = await createRunFromHistories(redis, runStoreOptions(config), histories, {
        tenant,
        runId,
        settings,
        scope,
        chunkSize: config.chunkSize,
        now: now(),
      })
      if (created === null) throw emptyScopeError(scope)
      await enqueueChunks(tenant, runId, created.chunks)
      return { record: created.record, missingSkus: created.missingSkus }
    },

    get: (tenant, runId) => store.getRun(tenant, runId),

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
          await Promise.allSettled(all.slice(i, i + BATCH).map((c) => queue.remove(chunkJobId(runId, c))))
        }
        await store.deleteChunkInputs(tenant, runId, all)
        await events.runEnded(tenant, runId)
      }
      return after
    },

    latestForecast: (tenant, sku) => store.latest(tenant, sku),
    forgetLatestForecast: (tenant, sku) => store.forgetLatest(tenant, sku),

    async ping() {
      await redis.ping()
    },

    async stats() {
      const [c, runs, fits] = await Promise.all([
        queue.getJobCounts('waiting', 'active', 'delayed', 'failed'),
        store.stats.runs(),
        store.stats.fits(),
      ])
      return { waiting: c.waiting ?? 0, active: c.active ?? 0, delayed: c.delayed ?? 0, failed: c.failed ?? 0, runs, fits }
    },

    close: () =>
      closeSteps(log, [
        ['run events queue', () => events.close()],
        ['chunk queue', () => queue.close()],
        ['Redis connection run-gateway', () => redis.quit()],
      ]),
  }
}
