import { Queue } from 'bullmq'
import type { RedisClient } from '../storage/redis.js'
import { queuePrefix, type Config } from '../config.js'
import { SCHEDULE_QUEUE, DEFAULT_MIN_INTERVAL_SECONDS } from '../schedules/names.js'
import type { FireJob } from '../schedules/fire.js'
import { ScheduleService } from '../schedules/service.js'
import { AccuracyStore } from '../storage/erp/accuracy-store.js'
import { DeliveryStore } from '../storage/erp/delivery-store.js'
import { RunStore, runStoreOptions } from '../storage/runs/run-store.js'
import { logErrors, type Logger } from '../logger.js'
import { ScheduleStore } from '../storage/erp/schedule-store.js'
import { HistoryStore } from '../storage/histories/history-store.js'
import { CallbackStore } from '../storage/erp/callback-store.js'
import { ClosingStore } from '../storage/erp/closing-store.js'
import { WorklistService } from '../runs/worklist-service.js'

/** What the HTTP routes of the ERP features (callbacks, deliveries, schedules, accuracy) use. */
export interface ErpServices {
  readonly callbacks: CallbackStore
  readonly deliveries: DeliveryStore
  readonly schedules: ScheduleService
  readonly accuracy: AccuracyStore
  readonly closing: ClosingStore
  /** The planners' exception worklist (runs/worklist-service.ts). */
  readonly worklist: WorklistService
}

/**
 * Builds the services over one Redis connection. The schedules queue is
 * opened on first use, so building an app (e.g. for the OpenAPI document)
 * touches nothing. `close` closes the queue, not the connection.
 */
export function createErpServices(
  config: Config,
  redis: RedisClient,
  opts: { readonly logger: Logger; readonly minIntervalSeconds?: number },
): { services: ErpServices; close(): Promise<void> } {
  const prefix = config.redisPrefix
  const runs = new RunStore(redis, runStoreOptions(config))
  const closing = new ClosingStore(redis, prefix)
  let queue: Queue<FireJob> | null = null
  const scheduleQueue = () => {
    if (queue === null) {
      queue = new Queue<FireJob>(SCHEDULE_QUEUE, { connection: redis, prefix: queuePrefix(config) })
      logErrors(queue, opts.logger, 'schedule queue (API)')
    }
    return queue
  }
  const accuracy = new AccuracyStore(redis, runs, closing, { prefix })
  return {
    services: {
      callbacks: new CallbackStore(redis, prefix),
      deliveries: new DeliveryStore(redis, { prefix, ttlSeconds: config.resultRetentionSeconds }),
      schedules: new ScheduleService(new ScheduleStore(redis, prefix), new HistoryStore(redis, { prefix }), scheduleQueue, {
        minIntervalSeconds: opts.minIntervalSeconds ?? config.scheduleMinIntervalSeconds ?? DEFAULT_MIN_INTERVAL_SECONDS,
      }),
      accuracy,
      closing,
      worklist: new WorklistService({ worklist: runs.worklist, accuracy, runs }),
    },
    close: async () => {
      await (queue as Queue<FireJob> | null)?.close()
    },
  }
}
