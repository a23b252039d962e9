import { workerData } from 'node:worker_threads'
import { z } from 'zod'
import { forecastSeries } from '../../engine/index.js'
import { createLogger } from '../../logger.js'
import { RunStore } from '../../storage/runs/run-store.js'
import { workerConnection } from '../../storage/redis.js'
import { createChunkProcessor } from '../processor.js'
import { createRunEventEmitter } from '../../callbacks/emitter.js'
import { lowerThreadPriority } from '../thread-priority.js'

/**
 * The sandboxed chunk processor: BullMQ loads this module (through
 * chunk-entry.mjs) on a worker thread of its pool, so CPU-heavy fitting never
 * blocks the main thread that renews job locks. Each thread opens its own
 * Redis connection; settings arrive as `workerData` (see worker.ts).
 */
export const SandboxContext = z.object({
  redisUrl: z.string(),
  /** Seed nodes of a Redis Cluster (config.ts); absent for one Redis server. */
  redisClusterNodes: z.array(z.object({ host: z.string(), port: z.number().int() })).optional(),
  prefix: z.string(),
  /** BullMQ's prefix (the run events queue): `{prefix}` on a cluster. */
  queuePrefix: z.string(),
  resultTtlSeconds: z.number().int().positive(),
  recordTtlSeconds: z.number().int().positive(),
  publishedKept: z.number().int().positive().optional(),
  worklistChangePercent: z.number().int().positive().optional(),
  logLevel: z.enum(['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent']),
  /** Niceness of this thread; absent: FITTING_NICENESS (the express lane's thread runs nicer to small runs). */
  niceness: z.number().int().min(0).max(19).optional(),
})
export type SandboxContext = z.infer<typeof SandboxContext>

const ctx = SandboxContext.parse(workerData)
// Fitting yields the cores to request handling and lock renewals (thread-priority.ts).
lowerThreadPriority(ctx.niceness)
const logger = createLogger({ level: ctx.logLevel })
// Open for the thread's life: BullMQ ends the thread, and with it the connection, when the worker closes.
const redis = workerConnection(ctx, logger, 'sandboxed-chunk-processor')
const store = new RunStore(redis, {
  prefix: ctx.prefix,
  resultTtlSeconds: ctx.resultTtlSeconds,
  recordTtlSeconds: ctx.recordTtlSeconds,
  ...(ctx.publishedKept === undefined ? {} : { publishedKept: ctx.publishedKept }),
  ...(ctx.worklistChangePercent === undefined ? {} : { worklistChangePercent: ctx.worklistChangePercent }),
})

const events = createRunEventEmitter(redis, ctx.queuePrefix, logger)

export default createChunkProcessor({
  store,
  forecast: forecastSeries,
  logger,
  onRunEnded: events.runEnded,
})
