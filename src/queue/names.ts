import type { JobsOptions } from 'bullmq'

/** Queue and job names, job ids and job options of the run machinery. */

export const CHUNK_QUEUE = 'run-chunks'
/**
 * Chunks of small runs (at most EXPRESS_MAX_SERIES series): served by a thread
 * of their own in each worker process, so a small run never waits for the
 * chunks of large runs that hold the other threads.
 */
export const EXPRESS_CHUNK_QUEUE = 'run-chunks-express'

/** Default of EXPRESS_MAX_SERIES: runs of at most this many series take the express lane. */
export const DEFAULT_EXPRESS_MAX_SERIES = 50
export const CHUNK_JOB = 'forecast-chunk'

/** Deterministic, so a run's chunk jobs can be found (cancel) and never enqueued twice. */
export function chunkJobId(runId: string, chunkIndex: number): string {
  return `${runId}.${chunkIndex}`
}

/** Attempts per chunk before the whole run fails. */
export const CHUNK_ATTEMPTS = 4

export const CHUNK_JOB_OPTIONS: JobsOptions = {
  attempts: CHUNK_ATTEMPTS,
  // 1 s, 2 s, 4 s between attempts.
  backoff: { type: 'exponential', delay: 1000 },
  // Redis keeps results (run store), not copies of finished jobs.
  removeOnComplete: true,
  // Failed jobs stay a week for diagnosis, at most 10,000 of them.
  removeOnFail: { age: 7 * 24 * 3600, count: 10_000 },
}
