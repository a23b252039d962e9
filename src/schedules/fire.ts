import { UnrecoverableError, type Job } from 'bullmq'
import type { Logger } from 'pino'
import { z } from 'zod'
import type { RunSettings } from '../schemas/run.js'
import type { ScheduleSelection, ScheduleStore } from '../storage/schedule-store.js'
import type { RunRecord } from '../storage/types.js'
import { SCHEDULE_QUEUE } from './names.js'

export const FireJob = z.object({ tenant: z.string().min(1).max(64), scheduleId: z.string().min(1).max(64) })
export type FireJob = z.infer<typeof FireJob>

/** Submits a run for a schedule's selection and settings. */
export type SubmitScheduled = (tenant: string, settings: RunSettings, selection: ScheduleSelection) => Promise<RunRecord>

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
  | { readonly outcome: 'failed'; readonly error: string }

/**
 * What happens when a schedule fires: submit a run, unless the run the
 * schedule started last is still queued or running (then skip, count and log).
 * A failed submit is counted and logged; the next firing tries again.
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
    const previous = schedule.state.currentRunId
    if (previous !== null) {
      const run = await deps.getRun(tenant, previous)
      if (run && (run.status === 'queued' || run.status === 'running')) {
        await deps.schedules.recordSkipped(tenant, scheduleId, now())
        log.info({ runId: previous, status: run.status, skipped: schedule.state.skipped + 1 }, 'previous run still going: firing skipped')
        return { outcome: 'skipped', runId: previous }
      }
    }
    try {
      const run = await deps.submit(tenant, schedule.settings, schedule.selection)
      await deps.schedules.recordFired(tenant, scheduleId, run.id, now())
      log.info({ runId: run.id, series: run.progress.total }, 'scheduled run submitted')
      return { outcome: 'submitted', runId: run.id }
    } catch (err) {
      const error = (err as Error).message
      await deps.schedules.recordFailed(tenant, scheduleId, error, now())
      log.warn({ err }, 'scheduled run could not be submitted')
      return { outcome: 'failed', error }
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
