import { createHash } from 'node:crypto'
import { z } from 'zod'
import type { RunRecord } from '../runs/contract.js'
import { RUN_EVENTS, type RunEvent } from '../runs/contract.js'

/** Job data and the body a receiver gets. */

export const RunEventJob = z.object({
  tenant: z.string().min(1).max(64),
  runId: z.string().min(1).max(64),
})
export type RunEventJob = z.infer<typeof RunEventJob>

export const DeliveryJob = z.object({
  tenant: z.string().min(1).max(64),
  runId: z.string().min(1).max(64),
  deliveryId: z.string().min(1).max(64),
  url: z.string().min(1).max(2048),
  event: z.enum(RUN_EVENTS),
  /** The exact body, fixed at the first attempt so every retry sends the same bytes. */
  body: z.string(),
})
export type DeliveryJob = z.infer<typeof DeliveryJob>

/** The event a terminal run status raises; null while the run is still going. */
export function eventOf(status: RunRecord['status']): RunEvent | null {
  switch (status) {
    case 'succeeded':
      return 'run.succeeded'
    case 'failed':
      return 'run.failed'
    case 'cancelled':
      return 'run.cancelled'
    default:
      return null
  }
}

/**
 * The id of the delivery of a run's event to one target: unique per run, event and
 * target, and the same however often the event is processed (a retried event job
 * opens no second delivery), so every retry of a delivery carries its id.
 */
export function deliveryIdFor(runId: string, event: RunEvent, url: string, callbackId: string | null): string {
  return `d-${createHash('sha256').update(`${runId}\n${event}\n${callbackId ?? 'run'}\n${url}`).digest('hex').slice(0, 32)}`
}

/**
 * The JSON body: what happened and where to read more. Settings are left out
 * (they may carry the callback URL); fetch the run for them.
 */
export function eventBody(event: RunEvent, run: RunRecord): string {
  return JSON.stringify({
    id: `${run.id}.${event}`,
    type: event,
    createdAt: run.finishedAt ?? run.createdAt,
    run: {
      id: run.id,
      status: run.status,
      progress: run.progress,
      createdAt: run.createdAt,
      startedAt: run.startedAt,
      finishedAt: run.finishedAt,
      summary: run.summary,
      failure: run.failure,
      links: { self: `/v1/runs/${run.id}`, results: `/v1/runs/${run.id}/results` },
    },
  })
}
