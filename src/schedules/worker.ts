import { Queue, Worker } from 'bullmq'
import { queuePrefix, type Config } from '../config.js'
import { logErrors, type Logger } from '../logger.js'
import { closeSteps } from '../shutdown.js'
import { workerConnection } from '../storage/redis.js'
import { ScheduleStore } from '../storage/erp/schedule-store.js'
import type { RunRecord } from '../runs/contract.js'
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
  const connection = workerConnection(config, log, 'schedule-worker')
  const redis = workerConnection(config, log, 'schedule-worker-store')
  const queue = new Queue(SCHEDULE_QUEUE, { connection: redis, prefix: queuePrefix(config) })
  logErrors(queue, log, 'schedule queue')
  const processor = createFireProcessor({
    schedules: new ScheduleStore(redis, config.redisPrefix),
    getRun: deps.getRun,
    submit: deps.submit,
    removeScheduler: (tenant, id) => queue.removeJobScheduler(schedulerId(tenant, id)),
    logger,
  })
  const worker = new Worker(SCHEDULE_QUEUE, processor, { connection, prefix: queuePrefix(config), concurrency: 2 })
  logErrors(worker, log, 'schedule worker')
  worker.on('failed', (job, err) => log.error({ err, jobId: job?.id }, 'schedule firing failed'))
  return {
    worker,
    close: () =>
      closeSteps(log, [
        ['schedule worker', () => worker.close()],
        ['schedule queue', () => queue.close()],
        ['Redis connection schedule-worker', () => connection.quit()],
        ['Redis connection schedule-worker-store', () => redis.quit()],
      ]),
  }
}
