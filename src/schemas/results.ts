import { z } from 'zod'
import { METRIC_NAMES, MODEL_NAMES } from '../engine/index.js'
import { RunSettings } from './run.js'
import { RUN_STATUSES } from '../storage/types.js'

/**
 * Response shapes of the v1 API. They mirror the types in storage/types.ts and
 * engine/types.ts; the response serializer parses every answer through them.
 */

const ModelName = z.enum(MODEL_NAMES)
const MetricName = z.enum(METRIC_NAMES)
const ModelFamily = z.enum(['level', 'trend', 'seasonal', 'seasonal-trend', 'intermittent'])

const MetricSet = z
  .object(Object.fromEntries(METRIC_NAMES.map((m) => [m, z.number().nullable()])) as Record<
    (typeof METRIC_NAMES)[number],
    z.ZodNullable<z.ZodNumber>
  >)
  .describe('Error measures; null where undefined (e.g. MAPE with zero actuals)')

const Params = z
  .record(z.string(), z.union([z.number(), z.array(z.number())]))
  .describe('Fitted parameters: alpha, beta, gamma, phi, seasonalFactors...')

export const ForecastPointSchema = z.object({
  period: z.string(),
  value: z.number(),
  lower: z.record(z.string(), z.number()).describe('Lower bounds keyed by level in percent'),
  upper: z.record(z.string(), z.number()).describe('Upper bounds keyed by level in percent'),
})

const LeaderboardEntry = z.object({
  // Another service version (during a deploy) may have stored a model this one does not know.
  model: z
    .union([ModelName, z.string()])
    .describe('Model name; normally one of the models listed, but an entry stored by another service version may name another'),
  family: z
    .union([ModelFamily, z.literal('unknown')])
    .describe("The model's family; 'unknown' for a model this service version does not know"),
  status: z.enum(['scored', 'skipped', 'failed']),
  metrics: MetricSet.optional(),
  score: z.number().optional(),
  reason: z.string().optional(),
})

const Warning = z.object({ code: z.string(), message: z.string() })

export const ReplenishmentSchema = z
  .object({
    leadTime: z.number().int().describe('Lead time L in periods'),
    serviceLevel: z.number().describe('Target cycle service level'),
    leadTimeDemand: z.number().describe('Sum of the point forecasts for steps 1..L'),
    sigma: z
      .number()
      .nullable()
      .describe('sigma_L = sigma_1 * sqrt(L), sigma_1 the RMS of one-step in-sample errors; null when unknown'),
    z: z.number().describe('Standard normal quantile at serviceLevel'),
    safetyStock: z.number().nullable().describe('z * sigma_L'),
    reorderPoint: z.number().nullable().describe('leadTimeDemand + safetyStock'),
    formula: z.literal('sigma1-sqrt-lead-time'),
  })
  .meta({
    id: 'Replenishment',
    description:
      'Textbook estimate (independent one-step errors, fixed lead time): review before ordering. ' +
      'Errors of smoothing models are correlated across steps, so sigma_L is often understated for trending series.',
  })

export const ForecastItem = z
  .object({
    sku: z.string(),
    model: z
      .union([ModelName, z.string()])
      .describe('Model chosen; normally one of the models listed, but a result stored by another service version may name another'),
    family: ModelFamily,
    params: Params,
    selection: z.object({
      method: z.enum(['holdout', 'in-sample', 'none']),
      metric: MetricName,
      holdout: z.number().int(),
      origins: z.number().int(),
    }),
    metrics: MetricSet.nullable(),
    leaderboard: z.array(LeaderboardEntry),
    forecast: z.array(ForecastPointSchema),
    intervals: z.object({
      method: z.enum(['analytical', 'empirical', 'none']),
      levels: z.array(z.number()),
      clamped: z.boolean().describe('Some lower bound was raised to zero'),
    }),
    warnings: z.array(Warning),
    replenishment: ReplenishmentSchema.optional(),
  })
  .meta({ id: 'ForecastItem' })

export const FailedItem = z
  .object({
    sku: z.string(),
    error: z.object({ code: z.string(), message: z.string() }),
  })
  .meta({ id: 'FailedItem', description: 'A series the engine could not forecast' })

export const ResultItemSchema = z.union([ForecastItem, FailedItem])

export const ForecastResponse = z.object({ items: z.array(ResultItemSchema) })

export const ResultPageSchema = z.object({
  items: z.array(ResultItemSchema),
  nextCursor: z.string().nullable().describe('null on the last page'),
})

export const RunResource = z
  .object({
    id: z.string(),
    status: z.enum(RUN_STATUSES),
    progress: z.object({
      total: z.number().int(),
      done: z.number().int(),
      failed: z.number().int(),
    }),
    createdAt: z.string().describe('ISO-8601'),
    startedAt: z.string().nullable(),
    finishedAt: z.string().nullable(),
    settings: RunSettings,
    summary: z
      .object({
        metric: MetricName,
        modelWins: z.partialRecord(ModelName, z.number().int()).describe('How many SKUs each model won'),
        meanHoldoutError: z.number().nullable(),
      })
      .nullable(),
    error: z.string().nullable(),
  })
  .meta({ id: 'Run' })

export const SkuForecast = ForecastItem.extend({
  runId: z.string(),
  producedAt: z.string().describe('ISO-8601'),
}).meta({ id: 'SkuForecast' })

/** Response bodies as the serializer takes them (the schemas' input types). */
export type ForecastBody = z.input<typeof ForecastResponse>
export type ResultPageBody = z.input<typeof ResultPageSchema>
export type SkuForecastBody = z.input<typeof SkuForecast>
export type RunBody = z.input<typeof RunResource>
