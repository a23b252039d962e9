import { z } from 'zod'
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { ProblemError } from '../../errors.js'
import { PageQuery, pageSchema, SkuParams } from '../../schemas/params.js'
import { REVIEW_STATES } from '../../runs/review.js'
import { DEFAULT_CHANGE_PERCENT, WORKLIST_KINDS } from '../../runs/worklist.js'
import { requireErp } from '../plugins/erp.js'
import { READ, WRITE_ONE } from './responses.js'

const KIND_TEXT =
  'biased: the tracking signal flags the forecasts (see GET /v1/accuracy/exceptions); large-change: the newest published ' +
  `forecast's summed common periods moved by WORKLIST_CHANGE_PERCENT (default ${DEFAULT_CHANGE_PERCENT} %, our default, not a standard) ` +
  'or more from the previous published forecast; failed: the newest publishing run could not forecast the SKU; ' +
  'short-history: the published forecast carries the warning short-history.'

const WorklistKind = z.enum(WORKLIST_KINDS).meta({ id: 'WorklistKind' })

const WorklistReviewSchema = z
  .object({
    state: z.enum(REVIEW_STATES).describe('acknowledged: seen, stays listed with the note; snoozed: hidden unless includeSnoozed'),
    note: z.string(),
    at: z.string().describe('When it was acknowledged or snoozed'),
    runId: z.string().nullable().describe('The run it was made on: the review ends when a newer run publishes (or fails) the SKU'),
  })
  .meta({ id: 'WorklistReview' })

const WorklistItemSchema = z
  .object({
    sku: z.string(),
    kinds: z.array(WorklistKind).min(1).describe('Why the SKU is listed; one or more'),
    trackingSignal: z
      .object({
        trackingSignal: z.number().nullable().describe('Sum of deviations / MAE, unitless'),
        smoothedTrackingSignal: z.number().nullable().describe("Trigg's smoothed tracking signal, unitless, in [-1, 1]"),
        scoredPeriods: z.number().int().min(0),
        flaggedBy: z.array(z.string()),
      })
      .nullable()
      .describe('For biased: the accuracy summary that flags the SKU'),
    change: z
      .object({
        percent: z
          .number()
          .nullable()
          .describe('100 · (new sum − previous sum) / |previous sum| over the common periods, in percent (like WORKLIST_CHANGE_PERCENT); null from a previous sum of 0'),
        previousRunId: z.string().nullable().describe('The run of the previous published forecast'),
        commonPeriods: z.number().int().min(0).describe('Periods both forecasts cover'),
      })
      .nullable()
      .describe('For large-change'),
    failure: z.object({ code: z.string(), message: z.string() }).nullable().describe('For failed: the result item\'s failure (message cut to 300 characters)'),
    historyLength: z.number().int().min(0).nullable().describe('For short-history: periods of the history the run fitted'),
    runId: z.string().nullable().describe('The publishing run that decided large-change, failed and short-history; null for a SKU only biased'),
    review: WorklistReviewSchema.nullable(),
  })
  .meta({ id: 'WorklistItem' })

const WorklistQuery = PageQuery.extend({
  kind: WorklistKind.optional().describe('Only SKUs of this kind'),
  includeSnoozed: z
    .enum(['true', 'false'])
    .default('false')
    .transform((v) => v === 'true')
    .describe('Also list snoozed SKUs'),
})

const WorklistCountsSchema = z
  .object(Object.fromEntries(WORKLIST_KINDS.map((k) => [k, z.number().int().min(0)])) as Record<(typeof WORKLIST_KINDS)[number], z.ZodNumber>)
  .meta({ id: 'WorklistCounts' })

const ReviewBody = z.strictObject({
  note: z.string().max(2000).default('').describe('Why, for the next planner (up to 2000 characters)'),
})

/** /v1/worklist: the planners' exception worklist over every kind, and its review. */
const routes: FastifyPluginAsyncZod = async (app) => {
  app.get(
    '/v1/worklist',
    {
      schema: {
        tags: ['worklist'],
        operationId: 'listWorklist',
        'x-problems': READ,
        summary: 'SKUs that need a planner\'s look, and why',
        description:
          `Ordered by SKU. ${KIND_TEXT} Each is a prompt to review the forecast before ordering on it, not a verdict. ` +
          'Snoozed SKUs are left out unless includeSnoozed=true, so a page may hold fewer than limit items.',
        querystring: WorklistQuery,
        response: { 200: pageSchema(WorklistItemSchema) },
      },
    },
    async (request) => {
      const { kind, limit, cursor, includeSnoozed } = request.query
      return requireErp(app).worklist.list(request.tenant, {
        limit,
        includeSnoozed,
        ...(kind === undefined ? {} : { kind }),
        ...(cursor === undefined ? {} : { cursor }),
      })
    },
  )

  app.get(
    '/v1/worklist/counts',
    {
      schema: {
        tags: ['worklist'],
        operationId: 'countWorklist',
        'x-problems': READ,
        summary: 'SKUs on the worklist per kind',
        description: `Snoozed SKUs included; a SKU of two kinds counts under both. ${KIND_TEXT}`,
        response: { 200: WorklistCountsSchema },
      },
    },
    async (request) => requireErp(app).worklist.counts(request.tenant),
  )

  for (const state of REVIEW_STATES) {
    const verb = state === 'acknowledged' ? 'acknowledge' : 'snooze'
    app.post(
      `/v1/worklist/:sku/${verb}`,
      {
        schema: {
          tags: ['worklist'],
          operationId: state === 'acknowledged' ? 'acknowledgeWorklistItem' : 'snoozeWorklistItem',
          'x-problems': WRITE_ONE,
          summary: state === 'acknowledged' ? 'Acknowledge a SKU on the worklist, with a note' : 'Snooze a SKU on the worklist until its next run',
          description:
            (state === 'acknowledged'
              ? 'Marks the SKU as seen, whatever its kinds; it stays listed with the note.'
              : 'Hides the SKU from the worklist, whatever its kinds.') +
            ' Either lasts until a newer run publishes (or fails) the SKU. A biased SKU\'s accuracy exception gets the same review. ' +
            '404 when the SKU is not on the worklist.',
          params: SkuParams,
          body: ReviewBody,
          response: { 200: WorklistItemSchema },
        },
      },
      async (request) => {
        const { sku } = request.params
        const item = await requireErp(app).worklist.review(request.tenant, sku, state, request.body.note)
        if (!item) throw new ProblemError('not-found', `SKU ${sku} is not on the worklist`)
        request.log.info({ sku, state }, 'worklist item reviewed')
        return item
      },
    )
  }
}

export default routes
