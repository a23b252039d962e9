import type { JobsOptions } from 'bullmq'

/** Queue, job names and job ids of callback deliveries (a queue of their own). */

export const CALLBACK_QUEUE = 'callbacks'
/** A run reached a terminal status: find the callbacks to call. */
export const RUN_EVENT_JOB = 'run-event'
/** One POST to one URL, retried with exponential backoff. */
export const DELIVERY_JOB = 'delivery'

/** One event job per run: a second emit for the same run is dropped by BullMQ (same id). */
export function runEventJobId(runId: string): string {
  return `event.${runId}`
}

export function deliveryJobId(runId: string, deliveryId: string): string {
  return `${runId}.${deliveryId}`
}

export const RUN_EVENT_JOB_OPTIONS: JobsOptions = {
  attempts: 5,
  backoff: { type: 'exponential', delay: 1000 },
  // Kept a day so a repeated emit (chunk retry after the run finished) finds the id taken.
  removeOnComplete: { age: 24 * 3600 },
  removeOnFail: { age: 7 * 24 * 3600 },
}

/** Defaults when config does not say otherwise. */
export const CALLBACK_DEFAULTS = {
  attempts: 5,
  /** First retry after this long, then doubling: 30 s, 1 min, 2 min, 4 min. */
  backoffMs: 30_000,
  timeoutMs: 10_000,
} as const
