import type { Queue } from 'bullmq'
import type { FieldError } from '../errors.js'
import type { RunScope, RunSettings } from '../schemas/run.js'
import { scopeSkuErrors } from '../runs/scope.js'
import type { HistoryStore } from '../storage/histories/history-store.js'
import type { Schedule, ScheduleStore } from '../storage/erp/schedule-store.js'
import type { Page } from '../storage/paging.js'
import { checkTiming, nextFiring } from './cron.js'
import { FIRE_JOB, schedulerId } from './names.js'
import type { FireJob } from './fire.js'
import { checkRunOptions, RunInputError } from '../runs/input.js'

export interface ScheduleInput {
  readonly name?: string
  readonly cron: string
  readonly timeZone: string
  readonly scope: RunScope
  readonly settings: RunSettings
}

/** A whole new definition of an existing schedule (the route merges the patch into the current one). */
export interface ScheduleUpdate extends ScheduleInput {
  readonly paused: boolean
}

export type ScheduleView = Schedule & { readonly nextFireAt: string | null }

/** Refused input: one entry per offending field, paths relative to the body. */
export class ScheduleInputError extends Error {
  override readonly name = 'ScheduleInputError'
  constructor(readonly errors: readonly FieldError[]) {
    super(errors.map((e) => `${e.path} ${e.message}`).join('; '))
  }
}

/**
 * Schedules as the HTTP layer sees them: the stored definition plus its
 * BullMQ job scheduler (`upsertJobScheduler` with the cron pattern and time
 * zone; each firing is a `fire` job on the schedules queue).
 */
export class ScheduleService {
  constructor(
    private readonly store: ScheduleStore,
    private readonly histories: Pick<HistoryStore, 'missing'>,
    private readonly queue: () => Queue<FireJob>,
    private readonly opts: { readonly minIntervalSeconds: number; readonly now?: () => Date },
  ) {}

  private now(): Date {
    return this.opts.now?.() ?? new Date()
  }

  /**
   * @throws ScheduleInputError on a bad pattern, time zone, settings or scope (a SKU
   * without a stored history or named twice); returns null when the tenant has the
   * most schedules allowed.
   */
  async create(tenant: string, input: ScheduleInput): Promise<ScheduleView | null> {
    await this.check(tenant, input, true)
    const def = await this.store.create(
      tenant,
      { name: input.name ?? null, cron: input.cron.trim(), timeZone: input.timeZone, scope: input.scope, settings: input.settings },
      this.now(),
    )
    if (def === null) return null
    try {
      await this.schedule(tenant, def)
    } catch (err) {
      await this.store.remove(tenant, def.id)
      throw err
    }
    return this.view({ ...def, firings: noFirings() })
  }

  /**
   * Replaces a schedule's definition, checked exactly as on create (the SKUs of
   * `scope.skus` only when `scopeChanged`: a SKU deleted since must not block a
   * pause), then pauses, moves or resumes its job scheduler. Pausing removes the
   * scheduler; resuming makes it again from now on, so slots missed while paused
   * are not fired. Firing counters stay. Null when there is no such schedule.
   * @throws ScheduleInputError on a bad pattern, time zone, settings or scope.
   */
  async update(tenant: string, id: string, input: ScheduleUpdate, scopeChanged: boolean): Promise<ScheduleView | null> {
    await this.check(tenant, input, scopeChanged)
    const updated = await this.store.update(tenant, id, {
      name: input.name ?? null,
      cron: input.cron.trim(),
      timeZone: input.timeZone,
      scope: input.scope,
      settings: input.settings,
      paused: input.paused,
    })
    if (updated === null) return null
    if (updated.paused) await this.queue().removeJobScheduler(schedulerId(tenant, id))
    else await this.schedule(tenant, updated)
    return this.view(updated)
  }

  /** @throws ScheduleInputError listing every bad field. */
  private async check(tenant: string, input: ScheduleInput, checkSkus: boolean): Promise<void> {
    const errors = checkTiming(input.cron, input.timeZone, this.opts.minIntervalSeconds, this.now())
    try {
      checkRunOptions(input.settings)
    } catch (err) {
      if (!(err instanceof RunInputError)) throw err
      errors.push({ path: err.field, message: err.message })
    }
    if (checkSkus && 'skus' in input.scope) {
      const bad = await scopeSkuErrors(input.scope.skus, (skus) => this.histories.missing(tenant, skus))
      if (bad) errors.push(...bad.errors)
    }
    if (errors.length > 0) throw new ScheduleInputError(errors)
  }

  /** Creates or moves the schedule's BullMQ job scheduler (its next firing counts from now). */
  private async schedule(tenant: string, def: Pick<Schedule, 'id' | 'cron' | 'timeZone'>): Promise<void> {
    await this.queue().upsertJobScheduler(
      schedulerId(tenant, def.id),
      { pattern: def.cron, tz: def.timeZone },
      { name: FIRE_JOB, data: { tenant, scheduleId: def.id }, opts: { removeOnComplete: 100, removeOnFail: 100, attempts: 1 } },
    )
  }

  async get(tenant: string, id: string): Promise<ScheduleView | null> {
    const s = await this.store.get(tenant, id)
    return s === null ? null : this.view(s)
  }

  /** @throws CursorError on a cursor this service did not issue. */
  async list(tenant: string, limit: number, cursor?: string): Promise<Page<ScheduleView>> {
    const page = await this.store.list(tenant, limit, cursor)
    return { items: page.items.map((s) => this.view(s)), nextCursor: page.nextCursor }
  }

  /** Deletes the schedule and its job scheduler; a run it started keeps going. */
  async remove(tenant: string, id: string): Promise<boolean> {
    const removed = await this.store.remove(tenant, id)
    if (removed) await this.queue().removeJobScheduler(schedulerId(tenant, id))
    return removed
  }

  private view(s: Schedule): ScheduleView {
    return { ...s, nextFireAt: s.paused ? null : nextFiring(s.cron, s.timeZone, this.now()) }
  }
}

function noFirings(): Schedule['firings'] {
  return { submitted: 0, skipped: 0, failed: 0, missingSkus: 0, lastFiredAt: null, currentRunId: null, lastFailure: null }
}
