import { z } from 'zod'
import { FREQUENCIES } from '../engine/index.js'
import { AdjustmentView } from './adjustments.js'
import { Tag } from './history.js'
import { CsvDialectQuery } from './csv-dialect.js'

/** GET /v1/forecasts/published: the bulk export of every current published forecast. */

export const PublishedQuery = z.object({
  tag: Tag.optional().describe('Only SKUs whose stored history carries this tag'),
  frequency: z.enum(FREQUENCIES).optional().describe('Only SKUs forecast at this frequency'),
  intervalLevels: z
    .string()
    .regex(/^\d{1,2}(\.\d{1,3})?(,\d{1,2}(\.\d{1,3})?){0,4}$/, 'must be 1 to 5 levels in percent, comma-separated, e.g. 80,95')
    .refine((v) => v.split(',').every((l) => Number(l) > 0), 'each level must be above 0 and below 100')
    .default('80,95')
    .describe('CSV only: the interval levels given as low<level>, high<level> columns, e.g. 80,95 (default). NDJSON rows carry every level the run made'),
}).extend(CsvDialectQuery.shape)

export const PublishedRowSchema = z
  .object({
    sku: z.string(),
    frequency: z.enum(FREQUENCIES),
    period: z.string(),
    demand: z.number().describe('Statistical point forecast of demand for the period (before adjustments)'),
    adjustment: AdjustmentView.nullable().describe('The adjustment in force for the period; null when none'),
    finalDemand: z.number().describe('The demand to plan with: demand with the adjustment applied; equal to demand when none'),
    intervals: z.array(z.object({ level: z.number(), low: z.number(), high: z.number() })).describe('Prediction intervals of the statistical forecast'),
    model: z.string().describe('The chosen model'),
    runId: z.string().describe('The publishing run that made the forecast'),
    producedAt: z.string().describe('ISO-8601'),
    replenishment: z
      .object({
        leadTimePeriods: z.number(),
        reviewPeriods: z.number(),
        leadTimeSdPeriods: z.number(),
        serviceLevel: z.number(),
        minimumOrder: z.number(),
        packSize: z.number(),
        orderQuantity: z.number(),
        coverDemand: z.number().nullable().describe('For an order placed at the start of the period; null where the protection interval runs past the horizon'),
        safetyStock: z.number().int().nullable(),
        reorderPoint: z.number().int().nullable(),
      })
      .optional()
      .describe("The SKU's replenishment policy and figures for an order placed in the period; only when its forecast has them (see Replenishment)"),
  })
  .meta({ id: 'PublishedForecastRow', description: 'One SKU and period of the published forecasts export (one NDJSON line)' })
