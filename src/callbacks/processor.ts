import { UnrecoverableError, type Job, type JobsOptions } from 'bullmq'
import type { Logger } from 'pino'
import type { DeliveryStore, DeliveryStatus } from '../storage/erp/delivery-store.js'
import type { Failure } from '../runs/contract.js'
import type { RunStore } from '../storage/runs/run-store.js'
import type { CallbackStore } from '../storage/erp/callback-store.js'
import { DELIVERY_JOB, RUN_EVENT_JOB, CALLBACK_QUEUE, deliveryJobId } from './names.js'
import { DeliveryJob, RunEventJob, deliveryIdFor, eventBody, eventOf } from './payload.js'
import { postJson } from './http-post.js'
import { signatureHeaders } from './signing.js'

export interface CallbackSettings {
  readonly attempts: number
  readonly backoffMs: number
  readonly timeoutMs: number
  /** Allow loopback and private addresses (tests, receivers inside the same network). */
  readonly allowPrivateNetworks: boolean
}

export interface CallbackProcessorDeps {
  readonly runs: Pick<RunStore, 'getRun'>
  readonly callbacks: CallbackStore
  readonly deliveries: DeliveryStore
  /** Adds delivery jobs (the callback queue). */
  readonly enqueue: (jobs: { name: string; data: DeliveryJob; opts: JobsOptions }[]) => Promise<unknown>
  readonly settings: CallbackSettings
  readonly logger: Logger
  readonly now?: () => Date
}

/** Thrown for a failed attempt; BullMQ retries with backoff until attempts run out. */
class AttemptFailed extends Error {
  override readonly name = 'AttemptFailed'
}

/** The `failure.code` of a failed delivery attempt (docs/problems.md lists them). */
export const DELIVERY_FAILURE_CODES = ['receiver-status', 'timeout', 'address-not-allowed', 'network-error'] as const

/** Why a request failed: our timeout or address check, else the system error code (ECONNREFUSED...). */
function requestFailure(err: unknown): Failure {
  const e = err as { code?: string; message?: string }
  if (e?.code === 'ETIMEDOUT') return { code: 'timeout', message: (e.message ?? e.code).slice(0, 200) }
  if (e?.code === 'EBLOCKED') return { code: 'address-not-allowed', message: (e.message ?? e.code).slice(0, 200) }
  return { code: 'network-error', message: (e?.code ?? e?.message ?? 'request failed').slice(0, 200) }
}

/** Scheme, host and port only: a callback URL's path or query may carry a token. */
function redactedUrl(url: string): string {
  try {
    return new URL(url).origin
  } catch {
    return '(invalid URL)'
  }
}

/**
 * The callback queue's processor:
 *  - `run-event`: reads the run; for a terminal status it opens one delivery per
 *    target (the run's callbackUrl, then standing callbacks subscribed to the
 *    event) and enqueues a job for each;
 *  - `delivery`: one signed POST; any answer but 2xx (redirects included, they
 *    are not followed), a timeout or a network error is a failed attempt, retried
 *    with backoff; an address the configuration refuses fails the delivery at
 *    once (`dead` after one attempt), as no retry could pass.
 * Every attempt is logged on the run (GET /v1/runs/{id}/deliveries); after the
 * last one the delivery is `dead`.
 */
export function createCallbackProcessor(deps: CallbackProcessorDeps) {
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
    for (const cb of await deps.callbacks.all(tenant)) {
      if (cb.events.includes(event)) targets.push({ url: cb.url, callbackId: cb.id })
    }
    if (targets.length === 0) return { deliveries: 0 }
    const body = eventBody(event, run)
    const createdAt = now().toISOString()
    const jobs = []
    for (const t of targets) {
      const id = deliveryIdFor(runId, event, t.url, t.callbackId)
      await deps.deliveries.open(tenant, runId, {
        id,
        url: t.url,
        event,
        source: t.callbackId === null ? 'run' : 'standing',
        callbackId: t.callbackId,
        status: 'pending',
        maxAttempts: settings.attempts,
        attempts: [],
        createdAt,
      })
      jobs.push({ name: DELIVERY_JOB, data: { tenant, runId, deliveryId: id, url: t.url, event, body }, opts: deliveryOptions(runId, id) })
    }
    await deps.enqueue(jobs)
    return { deliveries: jobs.length }
  }

  async function onDelivery(job: Job): Promise<{ httpStatus: number }> {
    const parsed = DeliveryJob.safeParse(job.data)
    if (!parsed.success) throw new UnrecoverableError('invalid delivery job data')
    const { tenant, runId, deliveryId, url, event, body } = parsed.data
    const attempt = job.attemptsMade + 1
    const maxAttempts = job.opts.attempts ?? 1
    const log = deps.logger.child({ queue: CALLBACK_QUEUE, jobId: job.id, runId, tenant, deliveryId, attempt })
    const secrets = await deps.callbacks.signingSecrets(tenant)
    const started = now()
    const t0 = performance.now()
    let httpStatus: number | null = null
    let failure: Failure | null = null
    try {
      httpStatus = await postJson(
        url,
        body,
        {
          'content-type': 'application/json',
          'user-agent': 'almanac-callbacks/1',
          'almanac-event': event,
          ...signatureHeaders(secrets, deliveryId, Math.floor(started.getTime() / 1000), body),
        },
        { timeoutMs: settings.timeoutMs, allowPrivateNetworks: settings.allowPrivateNetworks },
      )
      if (httpStatus < 200 || httpStatus > 299) failure = { code: 'receiver-status', message: `HTTP ${httpStatus}` }
    } catch (err) {
      failure = requestFailure(err)
    }
    const durationMs = Math.round(performance.now() - t0)
    // A refused address is a configuration matter: retrying cannot change the answer.
    const final = failure !== null && (failure.code === 'address-not-allowed' || attempt >= maxAttempts)
    const status: DeliveryStatus = failure === null ? 'delivered' : final ? 'dead' : 'retrying'
    await deps.deliveries.recordAttempt(tenant, runId, deliveryId, { attempt, at: started.toISOString(), httpStatus, failure, durationMs }, status)
    if (failure?.code === 'address-not-allowed') {
      log.error({ failure, url: redactedUrl(url) }, 'callback address refused by configuration; not retried')
      throw new UnrecoverableError(failure.message)
    }
    if (failure !== null) {
      log.warn({ httpStatus, failure, durationMs, status }, 'callback attempt failed')
      throw new AttemptFailed(failure.message)
    }
    log.info({ httpStatus, durationMs }, 'callback delivered')
    return { httpStatus: httpStatus! }
  }

  return async (job: Job): Promise<unknown> => {
    if (job.name === RUN_EVENT_JOB) return onRunEvent(job)
    if (job.name === DELIVERY_JOB) return onDelivery(job)
    throw new UnrecoverableError(`unknown callback job ${job.name}`)
  }
}
