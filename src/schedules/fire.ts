import { UnrecoverableError, type Job } from 'bullmq'
import type { Logger } from 'pino'
import { z } from 'zod'
import type { RunScope, RunSettings } from '../schemas/run.js'
import type { ScheduleStore } from '../storage/erp/schedule-store.js'
import { type Failure, type RunRecord } from '../runs/contract.js'
import { SCHEDULE_QUEUE } from './names.js'
import { RunInputError } from '../runs/input.js'

export const FireJob = z.object({ tenant: z.string().min(1).max(64), scheduleId: z.string().min(1).max(64) })
export type FireJob = z.infer<typeof FireJob>

/**
 * Submits a run for a schedule's scope and settings, its origin naming the schedule;
 * `missingSkus`: SKUs of the scope without a stored history.
 */
export type SubmitScheduled = (
  tenant: string,
  settings: RunSettings,
  scope: RunScope,
  scheduleId: string,
) => Promise<{ record: RunRecord; missingSkus: number }>

/** The `failure.code` of a firing that could not submit its run (docs/problems.md lists them). */
export const FIRING_FAILURE_CODES = ['empty-scope', 'invalid-option', 'submit-failed'] as const

function firingFailure(err: unknown): Failure {
  const message = err instanceof Error ? err.message : String(err)
  if (err instanceof RunInputError && (err.code === 'empty-scope' || err.code === 'invalid-option')) return { code: err.code, message }
  return { code: 'submit-failed', message }
}

export interface FireDeps {
  readonly schedules: ScheduleStore
  readonly getRun: (tenant: string, runId: string) => Promise<RunRecord | null>
  readonly submit: SubmitScheduled
  /** Removes the BullMQ scheduler of a schedule that no longer exists. */
  readonly removeScheduler: (tenant: string, scheduleId: string) => Promise<unknown>
  readonly logger: Logger
  readonly now?: () => Date
}

export type FireOutcome =
  | { readonly outcome: 'submitted'; readonly runId: string }
  | { readonly outcome: 'skipped'; readonly runId: string }
  | { readonly outcome: 'gone' }
  | { readonly outcome: 'paused' }
  | { readonly outcome: 'failed'; readonly failure: Failure }

/**
 * What happens when a schedule fires: submit a run over its scope, unless the
 * run the schedule started last is still queued or running (then skip, count
 * and log), or the schedule is paused (then do nothing). SKUs of the scope deleted since the schedule was made are skipped
 * and counted. A failed submit is counted and logged; the next firing tries again.
 */
export function createFireHandler(deps: FireDeps) {
  const now = deps.now ?? (() => new Date())
  return async (data: FireJob): Promise<FireOutcome> => {
    const { tenant, scheduleId } = data
    const log = deps.logger.child({ queue: SCHEDULE_QUEUE, tenant, scheduleId })
    const schedule = await deps.schedules.get(tenant, scheduleId)
    if (schedule === null) {
      await deps.removeScheduler(tenant, scheduleId)
      log.info('schedule no longer exists: scheduler removed')
      return { outcome: 'gone' }
    }
    // Pausing removes the job scheduler; a firing already handed out meanwhile does nothing.
    if (schedule.paused) {
      log.info('schedule paused: firing ignored')
      return { outcome: 'paused' }
    }
    const previous = schedule.firings.currentRunId
    if (previous !== null) {
      const run = await deps.getRun(tenant, previous)
      if (run && (run.status === 'queued' || run.status === 'running')) {
        await deps.schedules.recordSkipped(tenant, scheduleId, now())
        log.info({ runId: previous, status: run.status, skipped: schedule.firings.skipped + 1 }, 'previous run still going: firing skipped')
        return { outcome: 'skipped', runId: previous }
      }
    }
    try {
      const { record, missingSkus } = await deps.submit(tenant, schedule.settings, schedule.scope, scheduleId)
      await deps.schedules.recordSubmitted(tenant, scheduleId, record.id, missingSkus, now())
      log.info({ runId: record.id, series: record.progress.total, missingSkus }, 'scheduled run submitted')
      return { outcome: 'submitted', runId: record.id }
    } catch (err) {
      const failure = firingFailure(err)
      await deps.schedules.recordFailed(tenant, scheduleId, failure, now())
      log.warn({ err, failure: failure.code }, 'scheduled run could not be submitted')
      return { outcome: 'failed', failure }
    }
  }
}

/** The fire handler as a BullMQ processor. */
export function createFireProcessor(deps: FireDeps) {
  const fire = createFireHandler(deps)
  return async (job: Job): Promise<FireOutcome> => {
    const parsed = FireJob.safeParse(job.data)
    if (!parsed.success) throw new UnrecoverableError('invalid schedule fire job data')
    return fire(parsed.data)
  }
}
