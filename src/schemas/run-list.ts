import { z } from 'zod'
import { PageQuery } from './params.js'
import { RUN_ORIGIN_KINDS, RUN_STATUSES } from '../runs/contract.js'

/** An instant with its offset, e.g. 2026-03-01T00:00:00Z or 2026-03-01T02:00:00+01:00. */
const Instant = z.iso.datetime({ offset: true, message: 'must be an ISO-8601 instant with a time zone, e.g. 2026-03-01T00:00:00Z' })

/** `GET /v1/runs`: the shared paging plus filters; every given filter must hold. */
export const RunListQuery = PageQuery.extend({
  status: z.enum(RUN_STATUSES).optional().describe('Only runs with this status'),
  origin: z.enum(RUN_ORIGIN_KINDS).optional().describe('Only runs started this way (inline, scope, schedule)'),
  scheduleId: z
    .string()
    .regex(/^[A-Za-z0-9-]{1,64}$/, 'is not a schedule id')
    .optional()
    .describe('Only runs fired by this schedule (implies origin schedule)'),
  createdFrom: Instant.optional().describe('Only runs created at or after this instant (ISO-8601)'),
  createdTo: Instant.optional().describe('Only runs created before this instant (ISO-8601)'),
}).superRefine((q, ctx) => {
  if (q.createdFrom !== undefined && q.createdTo !== undefined && Date.parse(q.createdTo) <= Date.parse(q.createdFrom)) {
    ctx.addIssue({ code: 'custom', path: ['createdTo'], message: 'must be later than createdFrom' })
  }
  if (q.scheduleId !== undefined && q.origin !== undefined && q.origin !== 'schedule') {
    ctx.addIssue({ code: 'custom', path: ['scheduleId'], message: `only runs of origin schedule have one (origin is ${q.origin})` })
  }
})
export type RunListQuery = z.infer<typeof RunListQuery>
