import { z } from 'zod'
import { Sku } from './run.js'
import { CsvDialectQuery } from './csv-dialect.js'

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

export const PAGE_DEFAULT_LIMIT = 100
export const PAGE_MAX_LIMIT = 1000

/** `?limit=` and `?cursor=`, the same on every list (paging.ts). */
export const PageQuery = z.object({
  limit: z.coerce
    .number()
    .int()
    .min(1)
    .max(PAGE_MAX_LIMIT)
    .default(PAGE_DEFAULT_LIMIT)
    .describe(`Items per page (1..${PAGE_MAX_LIMIT}, default ${PAGE_DEFAULT_LIMIT})`),
  cursor: z
    .string()
    .min(1)
    .max(1024)
    .regex(/^[A-Za-z0-9_.-]+$/, 'is not a cursor returned by this API')
    .optional()
    .describe('nextCursor of the previous page; a cursor this API did not issue is a 400'),
})

/** A page of a list: `{ items, nextCursor }`. */
export const pageSchema = <T extends z.ZodType>(item: T) =>
  z.object({
    items: z.array(item),
    nextCursor: z.string().nullable().describe('Pass back as cursor for the next page; null on the last page'),
  })

/** `?view=`: `compact` leaves out each result item's `candidates`. */
export const ViewQuery = z.object({
  view: z
    .enum(['full', 'compact'])
    .default('full')
    .describe('full: every field; compact: every field but candidates (the per-model table), for clients that only read the forecast'),
})

export const ResultsQuery = PageQuery.extend({
  sku: Sku.optional().describe('Only the result of this SKU'),
})
  .extend(ViewQuery.shape)
  .extend(CsvDialectQuery.shape)
