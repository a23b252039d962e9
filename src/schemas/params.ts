import { z } from 'zod'
import { Sku } from './run.js'

/** Path and query parameters of the v1 routes. */

export const RunIdParams = z.object({
  runId: z
    .string()
    .min(1)
    .max(100)
    .regex(/^[A-Za-z0-9_-]+$/, 'must contain only letters, digits, - and _')
    .describe('Run id as returned by POST /v1/runs'),
})

export const SkuParams = z.object({ sku: Sku })

export const RESULTS_DEFAULT_LIMIT = 100
export const RESULTS_MAX_LIMIT = 1000

export const ResultsQuery = z.object({
  limit: z.coerce
    .number()
    .int()
    .min(1)
    .max(RESULTS_MAX_LIMIT)
    .default(RESULTS_DEFAULT_LIMIT)
    .describe(`Items per page (1..${RESULTS_MAX_LIMIT})`),
  cursor: z
    .string()
    .min(1)
    .max(512)
    .regex(/^[A-Za-z0-9_\-:.=+/]+$/, 'is not a cursor returned by this API')
    .optional()
    .describe('nextCursor of the previous page'),
  sku: Sku.optional().describe('Only the result of this SKU'),
})
