import { Queue, Worker } from 'bullmq'
import type { Logger } from 'pino'
import { queuePrefix, type Config } from '../config.js'
import { workerConnection } from '../queue/connection.js'
import { DeliveryStore } from '../storage/delivery-store.js'
import { RunStore } from '../storage/run-store.js'
import { CallbackStore } from './callback-store.js'
import { WEBHOOK_DEFAULTS, WEBHOOK_QUEUE } from './names.js'
import type { DeliveryJob } from './payload.js'
import { createWebhookProcessor, type WebhookSettings } from './processor.js'

export interface WebhookWorker {
  readonly worker: Worker
  close(): Promise<void>
}

export function webhookSettings(config: Config): WebhookSettings {
  return {
    attempts: config.webhookAttempts ?? WEBHOOK_DEFAULTS.attempts,
    backoffMs: config.webhookBackoffMs ?? WEBHOOK_DEFAULTS.backoffMs,
    timeoutMs: config.webhookTimeoutMs ?? WEBHOOK_DEFAULTS.timeoutMs,
    allowPrivateNetworks: config.webhookAllowPrivateNetworks ?? false,
  }
}

/**
 * Starts the webhook worker: I/O only, so it runs on the main thread with a
 * handful of deliveries in flight at once.
 */
export function startWebhookWorker(config: Config, logger: Logger, storeOpts: { resultTtlSeconds: number; recordTtlSeconds: number }): WebhookWorker {
  const log = logger.child({ queue: WEBHOOK_QUEUE })
  const connection = workerConnection(config)
  const redis = workerConnection(config)
  const queue = new Queue<DeliveryJob>(WEBHOOK_QUEUE, { connection: redis, prefix: queuePrefix(config) })
  queue.on('error', (err) => log.warn({ err }, 'webhook queue error'))
  const processor = createWebhookProcessor({
    runs: new RunStore(redis, { prefix: config.redisPrefix, ...storeOpts }),
    callbacks: new CallbackStore(redis, config.redisPrefix),
    deliveries: new DeliveryStore(redis, { prefix: config.redisPrefix, ttlSeconds: storeOpts.resultTtlSeconds }),
    enqueue: (jobs) => queue.addBulk(jobs),
    settings: webhookSettings(config),
    logger,
  })
  const worker = new Worker(WEBHOOK_QUEUE, processor, { connection, prefix: queuePrefix(config), concurrency: 8 })
  worker.on('error', (err) => log.error({ err }, 'webhook worker error'))
  worker.on('failed', (job, err) => {
    if (job && job.name !== 'delivery') log.error({ err, jobId: job.id }, 'webhook event job failed')
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
