import { Queue, Worker } from 'bullmq'
import { queuePrefix, type Config } from '../config.js'
import { logErrors, type Logger } from '../logger.js'
import { closeSteps } from '../shutdown.js'
import { workerConnection } from '../storage/redis.js'
import { DeliveryStore } from '../storage/erp/delivery-store.js'
import { RunStore, runStoreOptions } from '../storage/runs/run-store.js'
import { CallbackStore } from '../storage/erp/callback-store.js'
import { CALLBACK_DEFAULTS, CALLBACK_QUEUE } from './names.js'
import type { DeliveryJob } from './payload.js'
import { createCallbackProcessor, type CallbackSettings } from './processor.js'

export interface CallbackWorker {
  readonly worker: Worker
  close(): Promise<void>
}

export function callbackSettings(config: Config): CallbackSettings {
  return {
    attempts: config.callbackAttempts ?? CALLBACK_DEFAULTS.attempts,
    backoffMs: config.callbackBackoffMs ?? CALLBACK_DEFAULTS.backoffMs,
    timeoutMs: config.callbackTimeoutMs ?? CALLBACK_DEFAULTS.timeoutMs,
    allowPrivateNetworks: config.callbackAllowPrivateNetworks ?? false,
  }
}

/**
 * Starts the callback worker: I/O only, so it runs on the main thread with a
 * handful of deliveries in flight at once.
 */
export function startCallbackWorker(config: Config, logger: Logger): CallbackWorker {
  const log = logger.child({ queue: CALLBACK_QUEUE })
  const connection = workerConnection(config, log, 'callback-worker')
  const redis = workerConnection(config, log, 'callback-worker-store')
  const queue = new Queue<DeliveryJob>(CALLBACK_QUEUE, { connection: redis, prefix: queuePrefix(config) })
  logErrors(queue, log, 'callback queue')
  const processor = createCallbackProcessor({
    runs: new RunStore(redis, runStoreOptions(config)),
    callbacks: new CallbackStore(redis, config.redisPrefix),
    deliveries: new DeliveryStore(redis, { prefix: config.redisPrefix, ttlSeconds: config.resultRetentionSeconds }),
    enqueue: (jobs) => queue.addBulk(jobs),
    settings: callbackSettings(config),
    logger,
  })
  const worker = new Worker(CALLBACK_QUEUE, processor, { connection, prefix: queuePrefix(config), concurrency: 8 })
  logErrors(worker, log, 'callback worker')
  worker.on('failed', (job, err) => {
    if (job && job.name !== 'delivery') log.error({ err, jobId: job.id }, 'callback event job failed')
  })
  return {
    worker,
    close: () =>
      closeSteps(log, [
        ['callback worker', () => worker.close()],
        ['callback queue', () => queue.close()],
        ['Redis connection callback-worker', () => connection.quit()],
        ['Redis connection callback-worker-store', () => redis.quit()],
      ]),
  }
}
