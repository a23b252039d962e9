import { z } from 'zod'
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { poolAccuracy, type ScoredPeriod } from '../../engine/index.js'
import { ProblemError } from '../../errors.js'
import { TAG_PATTERN } from '../../history/types.js'
import { PageQuery, pageSchema, SkuParams } from '../../schemas/params.js'
import { REVIEW_STATES } from '../../storage/erp/accuracy-store.js'
import { requireErp } from '../plugins/erp.js'
import { requireHistories } from '../plugins/history.js'
import { AccuracySummarySchema } from './skus/accuracy.js'
import { READ, WRITE_ONE } from './responses.js'

const ReviewSchema = z
  .object({
    state: z.enum(REVIEW_STATES).describe('acknowledged: seen, stays listed; snoozed: hidden until a newer forecast of the SKU is published'),
    note: z.string(),
    at: z.string().describe('When it was acknowledged or snoozed'),
    runId: z.string().nullable().describe("The SKU's newest published run at that time"),
  })
  .meta({ id: 'ExceptionReview' })

const ExceptionSchema = AccuracySummarySchema.extend({
  review: ReviewSchema.nullable().describe('Set by acknowledge or snooze; cleared when the SKU leaves the list'),
}).meta({ id: 'AccuracyException' })

const ExceptionsQuery = PageQuery.extend({
  includeSnoozed: z
    .enum(['true', 'false'])
    .default('false')
    .transform((v) => v === 'true')
    .describe('Also list SKUs snoozed until their next published forecast'),
})

const ReviewBody = z.strictObject({
  note: z.string().max(2000).default('').describe('Why, for the next planner (up to 2000 characters)'),
})

const PooledQuery = z.object({
  tag: z.string().regex(TAG_PATTERN, 'is not a valid tag').describe('SKUs carrying this tag, e.g. category:garden'),
  lag: z.coerce.number().int().min(1).max(120).optional().describe('Score at this fixed lag instead (see GET /v1/skus/{sku}/accuracy)'),
})

const PooledSchema = z
  .object({
    tag: z.string(),
    lag: z.number().int().nullable(),
    skus: z.number().int().min(0).describe('SKUs of the tag with at least one scored period'),
    scoredPeriods: z.number().int().min(0),
    mae: z.number().nullable().describe('Mean absolute error over every scored period of every SKU, in demand units'),
    bias: z.number().nullable().describe('Mean deviation (actual − forecast), in demand units'),
    wape: z.number().nullable().describe('100 · sum |deviation| / sum |actual|, in percent; null when every actual is 0'),
    flaggedSkus: z.number().int().min(0).describe('SKUs whose own tracking signals flag them'),
  })
  .meta({ id: 'PooledAccuracy' })

/** Batch of histories read at a time when pooling a tag. */
const POOL_BATCH = 500

/** /v1/accuracy: the exception list and its review state, accuracy by tag. */
const routes: FastifyPluginAsyncZod = async (app) => {
  app.get(
    '/v1/accuracy/exceptions',
    {
      schema: {
        tags: ['accuracy'],
        operationId: 'listAccuracyExceptions',
        'x-problems': READ,
        summary: 'SKUs whose forecasts lean one way',
        description:
          'The exception list for planners, ordered by SKU: |tracking signal| >= 4 (common practice) or Trigg\'s smoothed ' +
          'signal beyond its limit, each after at least 4 scored periods. Review the model or the data of these SKUs ' +
          'before ordering on their forecasts. SKUs snoozed until their next published forecast are left out unless ' +
          'includeSnoozed=true, so a page may hold fewer than limit items.',
        querystring: ExceptionsQuery,
        response: { 200: pageSchema(ExceptionSchema) },
      },
    },
    async (request) => {
      const { limit, cursor, includeSnoozed } = request.query
      return requireErp(app).accuracy.exceptions(request.tenant, limit, cursor, includeSnoozed)
    },
  )

  for (const state of REVIEW_STATES) {
    const verb = state === 'acknowledged' ? 'acknowledge' : 'snooze'
    app.post(
      `/v1/accuracy/exceptions/:sku/${verb}`,
      {
        schema: {
          tags: ['accuracy'],
          operationId: state === 'acknowledged' ? 'acknowledgeAccuracyException' : 'snoozeAccuracyException',
          'x-problems': WRITE_ONE,
          summary: state === 'acknowledged' ? 'Acknowledge a flagged SKU, with a note' : 'Snooze a flagged SKU until its next published forecast',
          description:
            state === 'acknowledged'
              ? 'Marks the SKU as seen; it stays on the list, with the note, until it is no longer flagged. 404 when it is not on the list.'
              : 'Hides the SKU from the list until a newer forecast of it is published (the next run that publishes it). 404 when it is not on the list.',
          params: SkuParams,
          body: ReviewBody,
          response: { 200: ExceptionSchema },
        },
      },
      async (request) => {
        const { sku } = request.params
        const item = await requireErp(app).accuracy.review(request.tenant, sku, state, request.body.note)
        if (!item) throw new ProblemError('not-found', `SKU ${sku} is not on the exception list`)
        request.log.info({ sku, state }, 'accuracy exception reviewed')
        return item
      },
    )
  }

  app.get(
    '/v1/accuracy/by-tag',
    {
      schema: {
        tags: ['accuracy'],
        operationId: 'getTagAccuracy',
        'x-problems': READ,
        summary: 'Accuracy pooled over the SKUs of a tag',
        description:
          'Every scored period of every SKU carrying the tag, pooled (optionally at a fixed lag). Reads every SKU of the ' +
          'tag, so it takes longer the larger the tag.',
        querystring: PooledQuery,
        response: { 200: PooledSchema },
      },
    },
    async (request) => {
      const { tag, lag } = request.query
      const erp = requireErp(app)
      const perSku: ScoredPeriod[][] = []
      for await (const batch of requireHistories(app).select(request.tenant, { tags: [tag] }, POOL_BATCH)) {
        for (let i = 0; i < batch.length; i += 16) {
          const part = batch.slice(i, i + 16)
          perSku.push(
            ...(await Promise.all(
              part.map(async (h) => (lag === undefined ? erp.accuracy.periods(request.tenant, h.sku) : (await erp.accuracy.atLag(request.tenant, h, lag)).periods)),
            )),
          )
        }
      }
      return { tag, lag: lag ?? null, ...poolAccuracy(perSku) }
    },
  )
}

export default routes
