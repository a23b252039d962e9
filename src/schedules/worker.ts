import { Queue, Worker } from 'bullmq'
import type { Logger } from 'pino'
import { queuePrefix, type Config } from '../config.js'
import { workerConnection } from '../queue/connection.js'
import { ScheduleStore } from '../storage/schedule-store.js'
import type { RunRecord } from '../storage/types.js'
import { createFireProcessor, type SubmitScheduled } from './fire.js'
import { SCHEDULE_QUEUE, schedulerId } from './names.js'

export interface ScheduleWorker {
  readonly worker: Worker
  close(): Promise<void>
}

/**
 * Starts the worker that takes schedule firings. Any number of processes may
 * run it: BullMQ hands each firing (one job) to exactly one of them.
 */
export function startScheduleWorker(
  config: Config,
  logger: Logger,
  deps: { readonly submit: SubmitScheduled; readonly getRun: (tenant: string, runId: string) => Promise<RunRecord | null> },
): ScheduleWorker {
  const log = logger.child({ queue: SCHEDULE_QUEUE })
  const connection = workerConnection(config)
  const redis = workerConnection(config)
  const queue = new Queue(SCHEDULE_QUEUE, { connection: redis, prefix: queuePrefix(config) })
  queue.on('error', (err) => log.warn({ err }, 'schedule queue error'))
  const processor = createFireProcessor({
    schedules: new ScheduleStore(redis, config.redisPrefix),
    getRun: deps.getRun,
    submit: deps.submit,
    removeScheduler: (tenant, id) => queue.removeJobScheduler(schedulerId(tenant, id)),
    logger,
  })
  const worker = new Worker(SCHEDULE_QUEUE, processor, { connection, prefix: queuePrefix(config), concurrency: 2 })
  worker.on('error', (err) => log.error({ err }, 'schedule worker error'))
  worker.on('failed', (job, err) => log.error({ err, jobId: job?.id }, 'schedule firing failed'))
  return {
    worker,
    close: async () => {
      await worker.close()
      await queue.close()
      await Promise.allSettled([connection.quit(), redis.quit()])
    },
  }
}
