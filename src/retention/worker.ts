import { Queue, Worker } from 'bullmq'
import { queuePrefix, type Config } from '../config.js'
import { createAdjustmentService } from '../http/adjustment-services.js'
import { DEFAULT_TENANT } from '../http/plugins/auth.js'
import { logErrors, type Logger } from '../logger.js'
import { closeSteps } from '../shutdown.js'
import { AccuracyStore } from '../storage/erp/accuracy-store.js'
import { ClosingStore } from '../storage/erp/closing-store.js'
import { HistoryStore } from '../storage/histories/history-store.js'
import { IdleHistoryIndex } from '../storage/histories/idle-index.js'
import type { RedisClient } from '../storage/redis.js'
import { workerConnection } from '../storage/redis.js'
import { RunStore, runStoreOptions } from '../storage/runs/run-store.js'
import { RETENTION_QUEUE, SWEEP_EVERY_MS, SWEEP_JOB, SWEEP_SCHEDULER } from './names.js'
import { sweepIdleHistories, type RetentionDeps } from './sweep.js'

export interface RetentionWorker {
  close(): Promise<void>
}

/** The tenants the service knows: those of its API keys, or `default` when it runs without keys. */
export function configuredTenants(config: Pick<Config, 'apiKeys'>): string[] {
  return config.apiKeys.size === 0 ? [DEFAULT_TENANT] : [...config.apiKeys.keys()]
}

/** The stores retention reads and deletes through, over one connection (the same ones the API's SKU delete uses). */
export function retentionDeps(config: Config, redis: RedisClient): RetentionDeps {
  const prefix = config.redisPrefix
  const runs = new RunStore(redis, runStoreOptions(config))
  const accuracy = new AccuracyStore(redis, runs, new ClosingStore(redis, prefix), { prefix })
  const adjustments = createAdjustmentService(config, redis, { latestForecast: (t, s) => runs.latest(t, s) })
  return {
    index: new IdleHistoryIndex(redis, { prefix }),
    histories: new HistoryStore(redis, { prefix }),
    records: {
      forgetLatestForecast: (t, s) => runs.forgetLatest(t, s),
      forgetAccuracy: (t, s) => accuracy.forget(t, s),
      forgetAdjustments: (t, s) => adjustments.forget(t, s),
    },
  }
}

/**
 * Idle-history retention in the worker process: with HISTORY_IDLE_DAYS set, a
 * BullMQ job scheduler fires a sweep every SWEEP_EVERY_MS and BullMQ hands
 * each firing to one worker process. With it 0 (the default), the scheduler
 * is removed, so turning retention off stops the sweeps of every process.
 */
export function startRetentionWorker(config: Config, logger: Logger): RetentionWorker {
  const log = logger.child({ queue: RETENTION_QUEUE })
  const idleDays = config.historyIdleDays ?? 0
  const redis = workerConnection(config, log, 'retention-store')
  const queue = new Queue(RETENTION_QUEUE, { connection: redis, prefix: queuePrefix(config) })
  logErrors(queue, log, 'retention queue')
  const scheduled =
    idleDays > 0
      ? queue.upsertJobScheduler(SWEEP_SCHEDULER, { every: SWEEP_EVERY_MS }, { name: SWEEP_JOB, opts: { removeOnComplete: 100, removeOnFail: 100, attempts: 1 } })
      : queue.removeJobScheduler(SWEEP_SCHEDULER)
  const ready = scheduled.then(
    () => undefined,
    (err: unknown) => log.error({ err, idleDays }, 'could not set the idle-history sweep schedule'),
  )
  let stopping = false
  let connection: RedisClient | null = null
  let worker: Worker | null = null
  if (idleDays > 0) {
    const deps = retentionDeps(config, redis)
    const tenants = configuredTenants(config)
    connection = workerConnection(config, log, 'retention-worker')
    worker = new Worker(
      RETENTION_QUEUE,
      async () => {
        const outcome = await sweepIdleHistories(deps, tenants, {
          idleDays,
          nowMs: Date.now(),
          shouldStop: () => stopping,
          onError: (tenant, err) => log.error({ err, tenant }, 'idle-history sweep failed for a tenant'),
        })
        const removed = Object.fromEntries(outcome.removed)
        log.info({ removed, rounds: outcome.rounds, stopped: outcome.stopped, idleDays }, 'idle-history sweep done')
        return { removed, rounds: outcome.rounds }
      },
      { connection, prefix: queuePrefix(config), concurrency: 1 },
    )
    logErrors(worker, log, 'retention worker')
    worker.on('failed', (job, err) => log.error({ err, jobId: job?.id }, 'idle-history sweep failed'))
  }
  return {
    close: () => {
      stopping = true
      return closeSteps(log, [
        ['retention schedule', () => ready],
        ...(worker ? [['retention worker', () => worker.close()] as const] : []),
        ['retention queue', () => queue.close()],
        ...(connection ? [['Redis connection retention-worker', () => connection.quit()] as const] : []),
        ['Redis connection retention-store', () => redis.quit()],
      ])
    },
  }
}
