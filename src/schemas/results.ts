import { z } from 'zod'
import { AdjustmentView } from './adjustments.js'
import { FREQUENCIES, METRIC_NAMES, MODEL_NAMES } from '../engine/index.js'
import { RunScope, RunSettings } from './run.js'
import { RUN_ORIGIN_KINDS, RUN_STATUSES } from '../runs/contract.js'

/**
 * Response shapes of the v1 API. They mirror the types in runs/contract.ts and
 * engine/types.ts; the response serializer parses every answer through them.
 */

const ModelName = z.enum(MODEL_NAMES)
const MetricName = z.enum(METRIC_NAMES)
const ModelFamily = z.enum(['level', 'trend', 'seasonal', 'seasonal-trend', 'intermittent', 'combination'])

const HoldoutErrors = z
  .object({
    mae: z.number().nullable().describe('Mean absolute error, in demand units'),
    rmse: z.number().nullable().describe('Root mean squared error, in demand units'),
    mape: z.number().nullable().describe('Mean absolute percentage error, in percent, over periods with non-zero demand'),
    smape: z.number().nullable().describe('Symmetric mean absolute percentage error, in percent (0..200)'),
    mase: z.number().nullable().describe('Mean absolute scaled error, unitless (below 1: better than the in-sample last-value or last-season method)'),
    wape: z.number().nullable().describe('Weighted absolute percentage error, in percent: sum |error| / sum |demand|'),
    msis: z
      .number()
      .nullable()
      .optional()
      .describe(
        "Mean scaled interval score of the model's own 95% interval (M4 competition), unitless like mase; null when the model gave no spread. " +
          'Given for the chosen model (every scored candidate with modelSearch thorough)',
      ),
    pinball: z
      .number()
      .nullable()
      .optional()
      .describe(
        "Mean pinball (quantile) loss of the model's own quantiles 0.025, 0.1, 0.5, 0.9, 0.975, in demand units; null when the model gave no spread. " +
          'Given for the chosen model (every scored candidate with modelSearch thorough)',
      ),
  })
  .describe('Error measures on the holdout; null where undefined (e.g. MAPE when every actual is zero)')

const Params = z
  .record(z.string(), z.union([z.number(), z.array(z.number())]))
  .describe(
    'Fitted parameters; one key means the same in every model: levelWeight, trendWeight, seasonWeight, damping, ' +
      'startLevel, startTrend, startSeason, seasonFactors, seasonOffsets, slope, intercept, residualVariance, window, ' +
      'level, demandSize, demandInterval, biasFactor',
  )

const ForecastInterval = z.object({
  level: z.number().describe('Central interval level in percent'),
  low: z.number(),
  high: z.number(),
})

export const ForecastPointSchema = z.object({
  period: z.string(),
  demand: z.number().describe('Point forecast of demand for the period'),
  intervals: z.array(ForecastInterval).describe('One prediction interval per requested level, ascending'),
  quantiles: z
    .array(
      z.object({
        quantile: z.number().describe('Probability in (0, 1)'),
        demand: z.number().describe('Demand that actual demand stays at or below with this probability (an estimate)'),
      }),
    )
    .optional()
    .describe('One value per requested quantile, ascending; only when the request listed quantiles'),
})

const Candidate = z.object({
  model: ModelName,
  family: ModelFamily,
  status: z.enum(['scored', 'skipped', 'failed']),
  holdoutErrors: HoldoutErrors.optional(),
  score: z.number().optional().describe('The holdout error named by rankBy (lower is better)'),
  reason: z.string().optional().describe('Why the candidate was skipped or failed, e.g. "needs 24 periods, has 20"'),
})

const Warning = z.object({ code: z.string().describe('See docs/warnings.md'), message: z.string() })

const ReplenishmentPeriodSchema = z.object({
  period: z.string().describe('An order placed at the start of this period: its protection interval starts here'),
  coverDemand: z.number(),
  sigma: z.number().nullable(),
  safetyStock: z.number().int().nullable(),
  reorderPoint: z.number().int().nullable(),
})

export const ReplenishmentSchema = z
  .object({
    leadTimePeriods: z.number().describe("Lead time L in this SKU's periods (days converted by the calendar rule)"),
    reviewPeriods: z.number().describe('Review period R in periods (0: continuous review)'),
    leadTimeSdPeriods: z.number().describe('Standard deviation of the lead time in periods'),
    serviceLevel: z.number().describe('Target cycle service level'),
    minimumOrder: z.number().describe('Smallest order in units'),
    packSize: z.number().describe('Units per pack'),
    leadTimeDemand: z.number().describe('Forecast demand over the lead time'),
    coverDemand: z.number().describe('Forecast demand over the protection interval L + R'),
    sigma: z
      .number()
      .nullable()
      .describe("sqrt(sum of the forecast's step variances over L + R + (coverDemand / (L + R))^2 * leadTimeSdPeriods^2); null when unknown"),
    z: z.number().describe('Standard normal quantile at serviceLevel'),
    safetyStock: z.number().int().nullable().describe('z * sigma, rounded up to whole units'),
    reorderPoint: z.number().int().nullable().describe('coverDemand + z * sigma, rounded up: the reorder point (R = 0) or order-up-to level (R > 0)'),
    orderQuantity: z.number().describe('Demand over max(R, 1) periods, raised to minimumOrder, rounded up to whole packs'),
    formula: z.literal('summed-step-variance'),
    periods: z.array(ReplenishmentPeriodSchema).describe('The same figures for an order placed at the start of each forecast period, as far as the horizon reaches'),
  })
  .meta({
    id: 'Replenishment',
    description:
      "Estimate from the forecast's own error variances and the lead-time variability formula " +
      '(Silver, Pyke & Peterson 1998): review before ordering. Step errors are treated as uncorrelated, so sigma is, if anything, understated.',
  })

export const ForecastItem = z
  .object({
    sku: z.string(),
    frequency: z.enum(FREQUENCIES),
    model: ModelName.describe('The chosen model'),
    family: ModelFamily,
    params: Params,
    modelChoice: z.object({
      method: z.enum(['holdout', 'in-sample', 'none']),
      rankBy: MetricName,
      holdoutPeriods: z.number().int().min(0),
      holdoutOrigins: z.number().int().min(0),
      members: z
        .array(z.object({ model: ModelName, family: ModelFamily }))
        .optional()
        .describe("Only for model 'shortlist-combination': the models averaged, the AICc pick first"),
    }),
    holdoutErrors: HoldoutErrors.nullable(),
    candidates: z
      .array(Candidate)
      .optional()
      .describe('Every candidate model: scored ones best first, then skipped and failed ones. Left out with ?view=compact'),
    forecast: z.array(ForecastPointSchema),
    intervalMethod: z
      .enum(['analytical', 'empirical', 'calibrated', 'none'])
      .describe('How the intervals were made: calibrated (the model spread widened by its errors at rolling origins in the history), analytical, empirical, or none'),
    warnings: z.array(Warning),
    replenishment: ReplenishmentSchema.optional(),
  })
  .meta({ id: 'ForecastItem' })

export const Failure = z
  .object({ code: z.string().describe('See docs/problems.md'), message: z.string() })
  .meta({ id: 'Failure' })

export const FailedItem = z
  .object({
    sku: z.string(),
    frequency: z.enum(FREQUENCIES),
    failure: Failure,
  })
  .meta({ id: 'FailedItem', description: 'A series the engine could not forecast' })

export const ResultItemSchema = z.union([ForecastItem, FailedItem])

export const ForecastResponse = z.object({ items: z.array(ResultItemSchema) })

export const ResultPageSchema = z.object({
  items: z.array(ResultItemSchema),
  nextCursor: z.string().nullable().describe('null on the last page'),
})

export const RunOriginSchema = z
  .object({
    kind: z
      .enum(RUN_ORIGIN_KINDS)
      .describe('inline: series sent with POST /v1/runs; scope: stored histories named with POST /v1/runs; schedule: a firing of a schedule'),
    scheduleId: z.string().optional().describe('The schedule that fired the run; present exactly when kind is schedule'),
  })
  .meta({ id: 'RunOrigin', description: 'What started the run' })

export const RunResource = z
  .object({
    id: z.string(),
    status: z.enum(RUN_STATUSES),
    progress: z.object({
      total: z.number().int().min(0).describe('Series in the run'),
      done: z.number().int().min(0).describe('Series finished so far, failed ones included'),
      failed: z.number().int().min(0).describe('Series the engine could not forecast (failed items)'),
    }),
    createdAt: z.string().describe('ISO-8601'),
    startedAt: z.string().nullable().describe('ISO-8601'),
    finishedAt: z.string().nullable().describe('ISO-8601'),
    settings: RunSettings,
    scope: RunScope.nullable().describe('The stored histories the run covers; null for a run over inline series'),
    origin: RunOriginSchema,
    summary: z
      .object({
        rankBy: MetricName,
        modelCounts: z.partialRecord(ModelName, z.number().int().min(0)).describe('How many SKUs each model was chosen for'),
        meanHoldoutError: z.number().nullable().describe('Mean holdout error (named by rankBy) of the chosen models'),
      })
      .nullable()
      .describe('Present once the run has succeeded'),
    failure: Failure.nullable().describe('Why the run failed as a whole (chunk-failed, enqueue-failed); null otherwise'),
  })
  .meta({ id: 'Run' })

/** A point of a SKU's forecast: `demand` is the statistical forecast; adjustments add the rest. */
const SkuForecastPoint = ForecastPointSchema.extend({
  demand: z.number().describe('Statistical point forecast of demand for the period (before adjustments)'),
  finalDemand: z.number().describe('The demand to plan with: demand with the adjustment in force applied; equal to demand when none'),
  adjustment: AdjustmentView.nullable().describe('The adjustment in force for the period; null when none'),
})

export const SkuForecast = ForecastItem.extend({
  forecast: z
    .array(SkuForecastPoint)
    .describe('Intervals are those of the statistical forecast: an adjustment moves finalDemand, not the intervals'),
  runId: z.string(),
  producedAt: z.string().describe('ISO-8601'),
}).meta({ id: 'SkuForecast' })

/** Response bodies as the serializer takes them (the schemas' input types). */
export type ForecastBody = z.input<typeof ForecastResponse>
export type ResultPageBody = z.input<typeof ResultPageSchema>
export type SkuForecastBody = z.input<typeof SkuForecast>
export type RunBody = z.input<typeof RunResource>
