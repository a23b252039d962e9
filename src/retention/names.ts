/** Queue, job and job-scheduler names of idle-history retention. */

export const RETENTION_QUEUE = 'retention'
export const SWEEP_JOB = 'sweep-idle-histories'
/** One job scheduler for the whole service: each firing sweeps every tenant. */
export const SWEEP_SCHEDULER = 'idle-histories'

/**
 * How often the sweep fires. Idleness is counted in days, so an hour late is
 * nothing; a sweep that has more than an hour's work simply runs on, and the
 * next firing finds less.
 */
export const SWEEP_EVERY_MS = 3_600_000
