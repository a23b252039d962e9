import { z } from 'zod'
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { formatPeriod, parsePeriod } from '../../../engine/index.js'
import { ProblemError } from '../../../errors.js'
import { SkuParams } from '../../../schemas/params.js'
import { requireErp } from '../../plugins/erp.js'
import { requireHistories } from '../../plugins/history.js'
import { READ_ONE, WRITE_ONE } from '../responses.js'

export const AccuracySummarySchema = z
  .object({
    sku: z.string(),
    scoredPeriods: z.number().int().min(0).describe('Forecast periods scored against their actual demand'),
    mae: z.number().nullable().describe('Mean absolute error, in demand units'),
    bias: z.number().nullable().describe('Mean deviation, actual − forecast demand, in demand units: positive means demand above the forecast'),
    mape: z.number().nullable().describe('Mean absolute percentage error over non-zero actuals, in percent; null if none'),
    trackingSignal: z.number().nullable().describe('Sum of deviations / MAE, unitless'),
    smoothedTrackingSignal: z
      .number()
      .nullable()
      .describe("Trigg's smoothed tracking signal (1964): smoothed deviation / smoothed absolute deviation, weight 0.1, unitless, in [-1, 1]"),
    flagged: z.boolean().describe('flaggedBy is not empty'),
    flaggedBy: z
      .array(z.enum(['tracking-signal', 'smoothed-tracking-signal']))
      .describe(
        'Rules that fired, each needing at least ceil(trackingLimit) periods scored: |trackingSignal| >= trackingLimit; ' +
          '|smoothedTrackingSignal| > smoothedTrackingLimit',
      ),
    trackingLimit: z.number().describe('Tracking-signal limit (4, common practice)'),
    smoothedTrackingLimit: z.number().describe('Limit of the smoothed signal: its approximate 95 % bound for unbiased errors'),
    updatedAt: z.string(),
  })
  .meta({ id: 'AccuracySummary' })

const ScoredPeriodSchema = z.object({
  period: z.string(),
  runId: z.string().describe('Published run whose forecast was scored'),
  forecastDemand: z.number().describe('The point forecast the period was scored against'),
  actualDemand: z.number(),
  deviation: z.number().describe('actualDemand − forecastDemand, in demand units'),
})

const SkuAccuracy = AccuracySummarySchema.extend({
  lag: z.number().int().nullable().describe('The lag asked for; null: each period against the newest published forecast that covered it'),
  periods: z.array(ScoredPeriodSchema),
}).meta({ id: 'SkuAccuracy' })

const LagQuery = z.object({
  lag: z.coerce
    .number()
    .int()
    .min(1)
    .max(120)
    .optional()
    .describe(
      'Score at a fixed lag k instead: each kept published forecast against the period k periods after its origin ' +
        '(1 = one step ahead). Covers at most PUBLISHED_FORECASTS_KEPT periods.',
    ),
})

/** /v1/skus/{sku}/accuracy: how the published forecasts of a SKU did once actuals arrived. */
const routes: FastifyPluginAsyncZod = async (app) => {
  app.get(
    '/:sku/accuracy',
    {
      schema: {
        tags: ['accuracy'],
        operationId: 'getSkuAccuracy',
        'x-problems': READ_ONE,
        summary: 'Realised forecast accuracy of a SKU',
        description:
          "Each closed period of the SKU's stored history is scored against the newest published forecast that " +
          'covered it; what-if runs are never scored. With ?lag=k, accuracy at that fixed lag instead, computed from the ' +
          "kept published forecasts. 404 until a period has been scored (or, with lag, when the SKU has no history).",
        params: SkuParams,
        querystring: LagQuery,
        response: { 200: SkuAccuracy },
      },
    },
    async (request) => {
      const erp = requireErp(app)
      const { sku } = request.params
      const { lag } = request.query
      if (lag !== undefined) {
        const history = await requireHistories(app).get(request.tenant, sku)
        if (!history) throw new ProblemError('not-found', `No stored history for SKU ${sku}`)
        const { summary, periods } = await erp.accuracy.atLag(request.tenant, history, lag)
        return { sku, ...summary, updatedAt: new Date().toISOString(), lag, periods }
      }
      const summary = await erp.accuracy.get(request.tenant, sku)
      if (!summary) throw new ProblemError('not-found', `No scored forecast for SKU ${sku}`)
      return { ...summary, lag: null, periods: await erp.accuracy.periods(request.tenant, sku) }
    },
  )

  app.post(
    '/:sku/accuracy/recompute',
    {
      schema: {
        tags: ['accuracy'],
        operationId: 'recomputeSkuAccuracy',
        'x-problems': WRITE_ONE,
        summary: "Score a SKU's accuracy again from scratch",
        description:
          "Drops the SKU's scored periods and scores every closed period of its stored history again against the newest " +
          'kept published forecast that covered it. Uploads rescore by themselves (a corrected actual replaces the old ' +
          'one); use this after changing many periods at once. Periods older than the kept forecasts can no longer be ' +
          'scored. 404 when the SKU has no stored history or nothing could be scored.',
        params: SkuParams,
        response: { 200: SkuAccuracy },
      },
    },
    async (request) => {
      const erp = requireErp(app)
      const { sku } = request.params
      const history = await requireHistories(app).get(request.tenant, sku)
      if (!history) throw new ProblemError('not-found', `No stored history for SKU ${sku}`)
      const { summary } = await erp.accuracy.rescore(request.tenant, history, { fresh: true })
      if (!summary) throw new ProblemError('not-found', `No period of SKU ${sku} could be scored`)
      return { ...summary, lag: null, periods: await erp.accuracy.periods(request.tenant, sku) }
    },
  )

  app.delete(
    '/:sku/accuracy',
    {
      schema: {
        tags: ['accuracy'],
        operationId: 'resetSkuAccuracy',
        'x-problems': WRITE_ONE,
        summary: "Start a SKU's accuracy afresh",
        description:
          "Deletes the SKU's scored periods, summary, exception and review, and from now on scores only periods after " +
          'the last closed period of its stored history (for example after the item was replaced by another one under ' +
          'the same SKU). 204; 404 when there was nothing to delete.',
        params: SkuParams,
        response: { 204: z.null().describe('Deleted') },
      },
    },
    async (request, reply) => {
      const erp = requireErp(app)
      const { sku } = request.params
      const [summary, history, closed] = await Promise.all([
        erp.accuracy.get(request.tenant, sku),
        requireHistories(app).get(request.tenant, sku),
        erp.closing.ordinals(request.tenant),
      ])
      if (!summary) throw new ProblemError('not-found', `No scored forecast for SKU ${sku}`)
      let through: string | null = null
      if (history) {
        const last = parsePeriod(history.firstPeriod, history.frequency) + history.demand.length - 1
        through = formatPeriod(Math.min(last, closed[history.frequency] ?? last), history.frequency)
      }
      await erp.accuracy.reset(request.tenant, sku, through)
      request.log.info({ sku, through }, 'accuracy reset')
      reply.code(204)
      return null
    },
  )
}

export default routes
