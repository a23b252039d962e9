import { z } from 'zod'
import { MAX_ABS_VALUE, MAX_HORIZON, PERIOD_PATTERN } from './run.js'

/**
 * Request and response bodies of the adjustment routes
 * (/v1/skus/{sku}/adjustments..., /v1/skus/{sku}/value-added).
 */

/** Bounds of a percentage change: -100 % takes the demand to zero; +10,000 % is far beyond any promotion. */
export const CHANGE_PERCENT_MIN = -100
export const CHANGE_PERCENT_MAX = 10_000
/** Most periods one request may adjust (a forecast has at most MAX_HORIZON periods). */
export const MAX_ADJUSTED_PERIODS = MAX_HORIZON

const Period = z
  .string()
  .regex(PERIOD_PATTERN, 'must look like 2024, 2024-Q2, 2024-03, 2024-W09 or 2024-03-05')
  .describe("A period of the SKU's current forecast")

const ChangeFields = {
  setDemand: z
    .number()
    .min(0, 'must be at least 0')
    .max(MAX_ABS_VALUE, 'must be at most 1e15')
    .optional()
    .describe('The final demand of the period. Give setDemand or changePercent, not both'),
  changePercent: z
    .number()
    .min(CHANGE_PERCENT_MIN, `must be at least ${CHANGE_PERCENT_MIN}`)
    .max(CHANGE_PERCENT_MAX, `must be at most ${CHANGE_PERCENT_MAX}`)
    .optional()
    .describe('Change of the statistical demand in percent (-15 lowers it by 15 %); it follows a newer run of the same period'),
  reason: z.string().trim().min(1, 'must not be empty').max(500).describe('Why: a promotion, a lost customer...'),
  author: z.string().trim().min(1, 'must not be empty').max(100).describe('Who: the planner, or the system sending it'),
}

/** Exactly one of setDemand and changePercent, the error naming the field. */
function oneChange(body: { setDemand?: number | undefined; changePercent?: number | undefined }, ctx: z.RefinementCtx): void {
  const both = body.setDemand !== undefined && body.changePercent !== undefined
  if (both) ctx.addIssue({ code: 'custom', path: ['changePercent'], message: 'give setDemand or changePercent, not both' })
  if (body.setDemand === undefined && body.changePercent === undefined) {
    ctx.addIssue({ code: 'custom', path: ['setDemand'], message: 'give setDemand or changePercent' })
  }
}

export const PutAdjustmentBody = z
  .strictObject(ChangeFields)
  .superRefine(oneChange)
  .meta({ id: 'AdjustmentRequest', description: 'An adjustment of one period: setDemand or changePercent, with a reason and an author' })

export const PostAdjustmentsBody = z
  .strictObject({
    periods: z
      .array(Period)
      .min(1)
      .max(MAX_ADJUSTED_PERIODS)
      .refine((p) => new Set(p).size === p.length, 'lists a period twice')
      .describe("Periods of the SKU's current forecast to adjust the same way"),
    ...ChangeFields,
  })
  .superRefine(oneChange)
  .meta({ id: 'AdjustmentsRequest', description: 'The same adjustment for several periods' })

export const AdjustmentPeriodParams = z.object({
  period: Period,
})

export const DeleteAdjustmentQuery = z.object({
  author: z.string().trim().min(1, 'must not be empty').max(100).describe('Who removes it (recorded in the trail)'),
  reason: z.string().trim().min(1).max(500).optional().describe('Why (recorded in the trail)'),
})

const ChangeView = {
  setDemand: z.number().optional().describe('Present when the adjustment sets the demand'),
  changePercent: z.number().optional().describe('Present when the adjustment changes the statistical demand by a percentage'),
}

export const AdjustmentView = z
  .object({
    ...ChangeView,
    reason: z.string(),
    author: z.string(),
    setAt: z.string().describe('ISO-8601'),
  })
  .meta({ id: 'AdjustmentOnPoint' })

export const AdjustmentResource = z
  .object({
    period: z.string(),
    ...ChangeView,
    reason: z.string(),
    author: z.string(),
    setAt: z.string().describe('ISO-8601'),
    runId: z.string().describe('The run whose forecast was current when the adjustment was set'),
    statisticalDemand: z.number().nullable().describe("The current forecast's demand for the period; null if it has none"),
    finalDemand: z.number().nullable().describe('statisticalDemand with the adjustment applied; null if there is no statistical demand'),
  })
  .meta({ id: 'Adjustment' })

export const AdjustmentList = z
  .object({
    sku: z.string(),
    runId: z.string().nullable().describe("The run of the SKU's current forecast"),
    items: z.array(AdjustmentResource),
  })
  .meta({ id: 'AdjustmentList' })

const ChangeRecord = z.object(ChangeView).nullable()

export const TrailEntry = z
  .object({
    at: z.string().describe('ISO-8601'),
    action: z.enum(['set', 'removed', 'expired']).describe('set (new or changed), removed (DELETE), expired (the period passed)'),
    period: z.string(),
    author: z.string().describe('Who set or removed it; for expired, who had set it'),
    reason: z.string(),
    before: ChangeRecord.describe('The adjustment before; null if there was none'),
    after: ChangeRecord.describe('The adjustment after; null once removed or expired'),
    statisticalDemand: z.number().nullable().describe('The statistical demand of the period at that time; null if no forecast had it'),
    finalDemandBefore: z.number().nullable(),
    finalDemandAfter: z.number().nullable(),
    runId: z.string().nullable().describe("The run of the SKU's forecast at that time"),
  })
  .meta({ id: 'AdjustmentTrailEntry' })

export const TrailPage = z
  .object({
    items: z.array(TrailEntry).describe('Newest first'),
    nextCursor: z.string().nullable().describe('Pass back as cursor for the next (older) page; null on the last page'),
  })
  .meta({ id: 'AdjustmentTrail' })

const ErrorsBy = z.object({
  statistical: z.number().nullable(),
  final: z.number().nullable(),
  naive: z.number().nullable(),
})

export const ValueAddedSummary = z.object({
  scoredPeriods: z.number().int().min(0).describe('Periods scored: actual demand arrived for a forecast period'),
  adjustedPeriods: z.number().int().min(0).describe('Of those, periods that had an adjustment'),
  mae: ErrorsBy.describe('Mean absolute error of the statistical, final and naive (last value) forecasts over the scored periods, in demand units'),
  valueAdded: z
    .object({
      adjustments: z.number().nullable().describe('mae.statistical − mae.final: positive when the adjustments made the forecast better'),
      statistical: z.number().nullable().describe('mae.naive − mae.statistical: positive when the model beat the naive forecast'),
      final: z.number().nullable().describe('mae.naive − mae.final'),
    })
    .describe('Forecast value added, in demand units'),
  adjustmentsBeatStatistical: z.boolean().nullable().describe('mae.final < mae.statistical; null with no adjusted period'),
  statisticalBeatsNaive: z.boolean().nullable().describe('mae.statistical < mae.naive; null with no scored period'),
  finalBeatsNaive: z.boolean().nullable().describe('mae.final < mae.naive; null with no scored period'),
})

export const ValueAddedByAuthor = ValueAddedSummary.extend({ author: z.string() })

export const SkuValueAdded = ValueAddedSummary.extend({
  sku: z.string(),
  byAuthor: z.array(ValueAddedByAuthor).describe('Per author: only the periods they adjusted'),
  periods: z.array(
    z.object({
      period: z.string(),
      runId: z.string(),
      statisticalDemand: z.number(),
      finalDemand: z.number(),
      naiveDemand: z.number().describe("Demand of the forecast's last history period (the naive, last-value forecast)"),
      actualDemand: z.number(),
      author: z.string().nullable().describe('Author of the adjustment in force; null if none'),
    }),
  ),
}).meta({ id: 'SkuValueAdded' })
