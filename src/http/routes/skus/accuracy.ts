import { z } from 'zod'
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { ProblemError } from '../../../errors.js'
import { SkuParams } from '../../../schemas/params.js'
import { requireErp } from '../../plugins/erp.js'
import { READ_ONE } from '../responses.js'

export const AccuracySummarySchema = z
  .object({
    sku: z.string(),
    scoredPeriods: z.number().int().min(0).describe('Forecast periods scored against their actual demand'),
    mae: z.number().nullable().describe('Mean absolute error'),
    bias: z.number().nullable().describe('Mean deviation, actual − forecast demand: positive means demand above the forecast'),
    mape: z.number().nullable().describe('Mean absolute percentage error over non-zero actuals; null if none'),
    trackingSignal: z.number().nullable().describe('Sum of deviations / MAE'),
    smoothedTrackingSignal: z
      .number()
      .nullable()
      .describe("Trigg's smoothed tracking signal (1964): smoothed deviation / smoothed absolute deviation, weight 0.1, in [-1, 1]"),
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

const SkuAccuracy = AccuracySummarySchema.extend({
  periods: z.array(
    z.object({
      period: z.string(),
      runId: z.string().describe('Run whose forecast was scored'),
      forecastDemand: z.number().describe('The point forecast the period was scored against'),
      actualDemand: z.number(),
      deviation: z.number().describe('actualDemand − forecastDemand'),
    }),
  ),
})

/** GET /v1/skus/{sku}/accuracy: how the forecasts of a SKU did once actuals arrived. */
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
          "When a SKU's stored history gets actuals for periods its latest forecast covered, each such period is " +
          'scored once. 404 until a period has been scored.',
        params: SkuParams,
        response: { 200: SkuAccuracy },
      },
    },
    async (request) => {
      const erp = requireErp(app)
      const { sku } = request.params
      const summary = await erp.accuracy.get(request.tenant, sku)
      if (!summary) throw new ProblemError('not-found', `No scored forecast for SKU ${sku}`)
      return { ...summary, periods: await erp.accuracy.periods(request.tenant, sku) }
    },
  )
}

export default routes
