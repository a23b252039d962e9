import { availableParallelism } from 'node:os'
import { Worker } from 'bullmq'
import type { Logger } from 'pino'
import { queuePrefix, type Config } from '../config.js'
import { createRunEventEmitter } from '../callbacks/emitter.js'
import { runFailure } from '../runs/failures.js'
import { closeSteps } from '../shutdown.js'
import { workerConnection } from '../storage/redis.js'
import { RunStore, runStoreOptions } from '../storage/runs/run-store.js'
import { FairShare } from '../storage/runs/fair-share.js'
import { CHUNK_QUEUE, DEFAULT_EXPRESS_MAX_SERIES, EXPRESS_CHUNK_QUEUE } from './names.js'
import { ChunkJob } from './payload.js'
import type { SandboxContext } from './processors/chunk.js'
import { sandboxExecArgv } from './worker-flags.js'

/** Niceness of the express lane's thread: between request handling (0) and large runs' fitting (10). */
const EXPRESS_NICENESS = 5

export interface ChunkWorker {
  readonly worker: Worker
  readonly concurrency: number
  /** Stops taking chunks, lets in-flight chunks finish, then closes its Redis connections. */
  close(): Promise<void>
}

/**
 * Heap limits of each sandbox thread. Without them V8 sizes every thread's heap
 * for the machine's memory and lets it grow long before collecting, and a
 * worker process's RSS went well past the 500 MB target whatever the run size;
 * a 24 MiB young generation kept it far below, for somewhat more worker CPU
 * (more scavenges; figures in bench/RESULTS.md, "Figures behind choices in the
 * code"). The old generation gets 64 MiB plus 20 KB per series of a chunk, at
 * least 256 MiB (a chunk's live data is far less), so large CHUNK_SIZE values
 * still fit.
 */
export function sandboxHeapLimits(chunkSize: number): { maxOldGenerationSizeMb: number; maxYoungGenerationSizeMb: number } {
  return { maxOldGenerationSizeMb: Math.max(256, 64 + Math.ceil(chunkSize / 50)), maxYoungGenerationSizeMb: 24 }
}

/**
 * The module BullMQ loads on each worker thread. In production this file is
 * compiled JavaScript (dist/) and so is the processor beside it; when this
 * file runs from source (tests, benchmarks, scripts under tsx), the processor
 * is TypeScript and chunk-entry.mjs registers tsx on the thread first.
 */
function sandboxedProcessorFile(): URL {
  return import.meta.url.endsWith('.ts') ? new URL('./processors/chunk-entry.mjs', import.meta.url) : new URL('./processors/chunk.js', import.meta.url)
}

/**
 * Starts a chunk worker. Chunks run sandboxed on a pool of worker threads
 * (one per unit of concurrency, default one per core), so a process uses all
 * cores and lock renewal on the main thread keeps up with CPU-heavy fitting.
 * A chunk that fails its last attempt fails its whole run.
 */
export function startChunkWorker(config: Config, logger: Logger): ChunkWorker {
  const log = logger.child({ queue: CHUNK_QUEUE })
  const connection = workerConnection(config, log, 'chunk-worker')
  const storeRedis = workerConnection(config, log, 'chunk-worker-store')
  const store = new RunStore(storeRedis, runStoreOptions(config))
  const concurrency = config.workerConcurrency > 0 ? config.workerConcurrency : availableParallelism()
  const events = createRunEventEmitter(storeRedis, queuePrefix(config), log)
  const sandbox: SandboxContext = {
    redisUrl: config.redisUrl,
    ...(config.redisClusterNodes ? { redisClusterNodes: [...config.redisClusterNodes] } : {}),
    queuePrefix: queuePrefix(config),
    ...runStoreOptions(config),
    logLevel: config.logLevel,
  }

  const startWorker = (queueName: string, threads: number, niceness?: number) => {
    const worker = new Worker(queueName, sandboxedProcessorFile(), {
      connection,
      prefix: queuePrefix(config),
      concurrency: threads,
      useWorkerThreads: true,
      workerThreadsOptions: {
        workerData: niceness === undefined ? sandbox : { ...sandbox, niceness },
        resourceLimits: sandboxHeapLimits(config.chunkSize),
        // Without V8 flags such as --single-threaded (worker-flags.ts), which Node refuses in a thread's execArgv.
        execArgv: sandboxExecArgv(process.execArgv),
      },
      lockDuration: config.workerLockDurationMs ?? 30_000,
      stalledInterval: config.workerStalledIntervalMs ?? 30_000,
      // A chunk whose worker died twice is given up (and its run failed) rather than retried forever.
      maxStalledCount: 2,
    })
    const fair = new FairShare(storeRedis, queuePrefix(config), queueName)
    const qlog = log.child({ lane: queueName })
    worker.on('error', (err) => qlog.error({ err }, 'worker error'))
    // Moves the fair-share clock (fair-share.ts); a missed update only delays newcomers a little.
    worker.on('active', (job) => {
      fair.started(job.priority).catch((err: unknown) => qlog.warn({ err, jobId: job.id }, 'could not record a started chunk for fair sharing'))
    })
    worker.on('failed', (job, err) => {
      if (!job) return
      const jlog = qlog.child({ jobId: job.id, runId: job.data?.runId, tenant: job.data?.tenant })
      void (async () => {
        if (!(await job.isFailed())) {
          jlog.warn({ err, attemptsMade: job.attemptsMade }, 'chunk attempt failed; will retry')
          return
        }
        const data = ChunkJob.safeParse(job.data)
        if (!data.success) return jlog.error({ err }, 'chunk with invalid data failed')
        const { tenant, runId, chunkIndex } = data.data
        const ended = await store.endRun(tenant, runId, 'failed', runFailure('chunk-failed', `chunk ${chunkIndex} failed: ${err.message}`), new Date())
        if (ended?.status === 'failed') await events.runEnded(tenant, runId)
        jlog.error({ err, attemptsMade: job.attemptsMade }, 'chunk failed for good: run failed')
      })().catch((e) => jlog.error({ err: e }, 'could not record failed chunk'))
    })
    return worker
  }
  const worker = startWorker(CHUNK_QUEUE, concurrency)
  // The express lane's own thread: small runs never wait behind large runs' chunks (names.ts). Its work is
  // small by construction, so it runs ahead of the fitting threads (which stay below request handling).
  const express = (config.expressMaxSeries ?? DEFAULT_EXPRESS_MAX_SERIES) > 0 ? startWorker(EXPRESS_CHUNK_QUEUE, 1, EXPRESS_NICENESS) : null
  log.info({ concurrency, prefix: config.redisPrefix, queuePrefix: queuePrefix(config) }, 'chunk worker started')

  return {
    worker,
    concurrency,
    close: async () => {
      await closeSteps(log, [
        ['chunk worker', () => worker.close()],
        ...(express ? [['express chunk worker', () => express.close()] as const] : []),
        ['run events queue', () => events.close()],
        ['Redis connection chunk-worker', () => connection.quit()],
        ['Redis connection chunk-worker-store', () => storeRedis.quit()],
      ])
      log.info('chunk worker stopped')
    },
  }
}
