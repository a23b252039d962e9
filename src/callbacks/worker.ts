import { Queue, Worker } from 'bullmq'
import type { Logger } from 'pino'
import { queuePrefix, type Config } from '../config.js'
import { workerConnection } from '../queue/connection.js'
import { DeliveryStore } from '../storage/delivery-store.js'
import { RunStore } from '../storage/run-store.js'
import { CallbackStore } from './callback-store.js'
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
export function startCallbackWorker(config: Config, logger: Logger, storeOpts: { resultTtlSeconds: number; recordTtlSeconds: number }): CallbackWorker {
  const log = logger.child({ queue: CALLBACK_QUEUE })
  const connection = workerConnection(config)
  const redis = workerConnection(config)
  const queue = new Queue<DeliveryJob>(CALLBACK_QUEUE, { connection: redis, prefix: queuePrefix(config) })
  queue.on('error', (err) => log.warn({ err }, 'callback queue error'))
  const processor = createCallbackProcessor({
    runs: new RunStore(redis, { prefix: config.redisPrefix, ...storeOpts }),
    callbacks: new CallbackStore(redis, config.redisPrefix),
    deliveries: new DeliveryStore(redis, { prefix: config.redisPrefix, ttlSeconds: storeOpts.resultTtlSeconds }),
    enqueue: (jobs) => queue.addBulk(jobs),
    settings: callbackSettings(config),
    logger,
  })
  const worker = new Worker(CALLBACK_QUEUE, processor, { connection, prefix: queuePrefix(config), concurrency: 8 })
  worker.on('error', (err) => log.error({ err }, 'callback worker error'))
  worker.on('failed', (job, err) => {
    if (job && job.name !== 'delivery') log.error({ err, jobId: job.id }, 'callback event job failed')
  })
  return {
    worker,
    close: async () => {
      await worker.close()
      await queue.close()
      await Promise.allSettled([connection.quit(), redis.quit()])
    },
  }
}
