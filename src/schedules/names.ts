/** Queue and job names of schedules. */

export const SCHEDULE_QUEUE = 'schedules'
export const FIRE_JOB = 'fire'

/** BullMQ job-scheduler id of a tenant's schedule (unique across tenants). */
export function schedulerId(tenant: string, scheduleId: string): string {
  return `${tenant}.${scheduleId}`
}

/** Closest two firings may be, by default: a schedule is for overnight runs, not polling. */
export const DEFAULT_MIN_INTERVAL_SECONDS = 300
