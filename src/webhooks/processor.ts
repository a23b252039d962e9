import { UnrecoverableError, type Job, type JobsOptions } from 'bullmq'
import type { Logger } from 'pino'
import type { DeliveryStore, DeliveryState } from '../storage/delivery-store.js'
import type { RunStore } from '../storage/run-store.js'
import type { CallbackStore } from './callback-store.js'
import { DELIVERY_JOB, RUN_EVENT_JOB, WEBHOOK_QUEUE, deliveryJobId } from './names.js'
import { DeliveryJob, RunEventJob, deliveryIdFor, eventBody, eventOf } from './payload.js'
import { postJson } from './http-post.js'
import { signatureHeaders } from './signing.js'

export interface WebhookSettings {
  readonly attempts: number
  readonly backoffMs: number
  readonly timeoutMs: number
  /** Allow loopback and private addresses (tests, receivers inside the same network). */
  readonly allowPrivateNetworks: boolean
}

export interface WebhookProcessorDeps {
  readonly runs: Pick<RunStore, 'getRun'>
  readonly callbacks: CallbackStore
  readonly deliveries: DeliveryStore
  /** Adds delivery jobs (the webhook queue). */
  readonly enqueue: (jobs: { name: string; data: DeliveryJob; opts: JobsOptions }[]) => Promise<unknown>
  readonly settings: WebhookSettings
  readonly logger: Logger
  readonly now?: () => Date
}

/** Thrown for a failed attempt; BullMQ retries with backoff until attempts run out. */
class AttemptFailed extends Error {
  override readonly name = 'AttemptFailed'
}

/** Short reason for a failed request: the system error code, or the message of ours (timeout, blocked). */
function describeError(err: unknown): string {
  const e = err as { code?: string; message?: string }
  if (e?.code === 'ETIMEDOUT' || e?.code === 'EBLOCKED') return (e.message ?? e.code).slice(0, 200)
  return (e?.code ?? e?.message ?? 'request failed').slice(0, 200)
}

/**
 * The webhook queue's processor:
 *  - `run-event`: reads the run; for a terminal status it opens one delivery per
 *    target (the run's callbackUrl, then standing callbacks subscribed to the
 *    event) and enqueues a job for each;
 *  - `delivery`: one signed POST; any answer but 2xx (redirects included, they
 *    are not followed), a timeout, a network error or a private address (unless
 *    allowed) is a failed attempt.
 * Every attempt is logged on the run (GET /v1/runs/{id}/deliveries); after the
 * last one the delivery is `dead`.
 */
export function createWebhookProcessor(deps: WebhookProcessorDeps) {
  const now = deps.now ?? (() => new Date())
  const { settings } = deps
  const deliveryOptions = (runId: string, deliveryId: string): JobsOptions => ({
    jobId: deliveryJobId(runId, deliveryId),
    attempts: settings.attempts,
    backoff: { type: 'exponential', delay: settings.backoffMs },
    removeOnComplete: { age: 24 * 3600 },
    removeOnFail: { age: 7 * 24 * 3600 },
  })

  async function onRunEvent(job: Job): Promise<{ deliveries: number }> {
    const parsed = RunEventJob.safeParse(job.data)
    if (!parsed.success) throw new UnrecoverableError('invalid run-event job data')
    const { tenant, runId } = parsed.data
    const run = await deps.runs.getRun(tenant, runId)
    const event = run ? eventOf(run.status) : null
    if (!run || !event) return { deliveries: 0 }
    const targets: { url: string; callbackId: string | null }[] = []
    if (run.settings.callbackUrl) targets.push({ url: run.settings.callbackUrl, callbackId: null })
    for (const cb of await deps.callbacks.list(tenant)) {
      if (cb.events.includes(event)) targets.push({ url: cb.url, callbackId: cb.id })
    }
    if (targets.length === 0) return { deliveries: 0 }
    const body = eventBody(event, run)
    const createdAt = now().toISOString()
    const jobs = []
    for (const t of targets) {
      const id = deliveryIdFor(t.url, t.callbackId)
      await deps.deliveries.open(tenant, runId, {
        id,
        url: t.url,
        event,
        source: t.callbackId === null ? 'run' : 'standing',
        callbackId: t.callbackId,
        state: 'pending',
        maxAttempts: settings.attempts,
        attempts: [],
        createdAt,
      })
      jobs.push({ name: DELIVERY_JOB, data: { tenant, runId, deliveryId: id, url: t.url, event, body }, opts: deliveryOptions(runId, id) })
    }
    await deps.enqueue(jobs)
    return { deliveries: jobs.length }
  }

  async function onDelivery(job: Job): Promise<{ statusCode: number }> {
    const parsed = DeliveryJob.safeParse(job.data)
    if (!parsed.success) throw new UnrecoverableError('invalid delivery job data')
    const { tenant, runId, deliveryId, url, event, body } = parsed.data
    const attempt = job.attemptsMade + 1
    const maxAttempts = job.opts.attempts ?? 1
    const log = deps.logger.child({ queue: WEBHOOK_QUEUE, jobId: job.id, runId, tenant, deliveryId, attempt })
    const secret = await deps.callbacks.ensureSecret(tenant)
    const started = now()
    const t0 = performance.now()
    let statusCode: number | null = null
    let error: string | null = null
    try {
      statusCode = await postJson(
        url,
        body,
        {
          'content-type': 'application/json',
          'user-agent': 'almanac-webhooks/1',
          'almanac-event': event,
          'almanac-delivery': deliveryId,
          ...signatureHeaders(secret, Math.floor(started.getTime() / 1000), body),
        },
        { timeoutMs: settings.timeoutMs, allowPrivateNetworks: settings.allowPrivateNetworks },
      )
      if (statusCode < 200 || statusCode > 299) error = `HTTP ${statusCode}`
    } catch (err) {
      error = describeError(err)
    }
    const durationMs = Math.round(performance.now() - t0)
    const state: DeliveryState = error === null ? 'delivered' : attempt >= maxAttempts ? 'dead' : 'retrying'
    await deps.deliveries.recordAttempt(tenant, runId, deliveryId, { attempt, at: started.toISOString(), statusCode, error, durationMs }, state)
    if (error !== null) {
      log.warn({ statusCode, error, durationMs, state }, 'webhook attempt failed')
      throw new AttemptFailed(error)
    }
    log.info({ statusCode, durationMs }, 'webhook delivered')
    return { statusCode: statusCode! }
  }

  return async (job: Job): Promise<unknown> => {
    if (job.name === RUN_EVENT_JOB) return onRunEvent(job)
    if (job.name === DELIVERY_JOB) return onDelivery(job)
    throw new UnrecoverableError(`unknown webhook job ${job.name}`)
  }
}
