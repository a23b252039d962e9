import { z } from 'zod'
import { ClosingReportSchema } from './closing.js'
import { FREQUENCIES, METRIC_NAMES, MODEL_NAMES } from '../engine/index.js'
import { WARNING_CODE_PATTERN } from '../runs/sku-summary.js'
import { BATCH_ID_PATTERN, DUPLICATE_POLICIES, MAX_TAGS, TAG_PATTERN, UPLOAD_MODES } from '../history/types.js'
import { DemandValue, MAX_POINTS_PER_SERIES, PeriodLabel, StockPolicy } from './run.js'
import { PageQuery, pageSchema } from './params.js'
import { CsvDialectQuery } from './csv-dialect.js'

/** Request and response shapes of the stored-history routes. */

export const Tag = z
  .string()
  .regex(TAG_PATTERN, 'must be 1-64 characters of letters, digits and . _ : / = -, starting with a letter or digit')
  .describe('Tag such as category:garden or site:north')

export const HistoryBody = z.strictObject({
  frequency: z.enum(FREQUENCIES),
  firstPeriod: PeriodLabel,
  demand: z
    .array(DemandValue)
    .min(1)
    .max(MAX_POINTS_PER_SERIES)
    .describe('Demand per period, oldest first; null marks a missing period'),
  tags: z.array(Tag).max(MAX_TAGS).optional().describe('Replaces the stored tags; absent means no tags'),
  replenishment: StockPolicy.optional().describe("The SKU's stock policy, used by runs that ask for replenishment; absent means none"),
})

export const HistoryResource = z
  .object({
    sku: z.string(),
    frequency: z.enum(FREQUENCIES),
    firstPeriod: z.string(),
    lastPeriod: z.string(),
    periodCount: z.number().int().min(1),
    demand: z.array(z.number().nullable()),
    tags: z.array(z.string()),
    replenishment: StockPolicy.optional(),
    updatedAt: z.string().describe('ISO-8601'),
  })
  .meta({ id: 'History' })

const ErrorBound = z.coerce.number().finite().min(0)

export const SkuListQuery = PageQuery.extend({
  tag: Tag.optional().describe('Only SKUs carrying this tag'),
  prefix: z.string().min(1).max(200).optional().describe('Only SKUs starting with this text'),
  model: z.enum(MODEL_NAMES).optional().describe('Only SKUs whose newest published forecast chose this model'),
  warning: z
    .string()
    .regex(WARNING_CODE_PATTERN, 'must be a warning code such as short-history (docs/warnings.md)')
    .optional()
    .describe('Only SKUs whose newest published forecast carries this warning code (docs/warnings.md)'),
  failed: z
    .enum(['true', 'false'])
    .transform((v) => v === 'true')
    .optional()
    .describe('true: only SKUs the newest publishing run could not forecast; false: only SKUs it did forecast'),
  exception: z
    .enum(['true', 'false'])
    .transform((v) => v === 'true')
    .optional()
    .describe('true: only SKUs on the accuracy exception list (GET /v1/accuracy/exceptions); false: only SKUs not on it'),
  errorMeasure: z
    .enum(METRIC_NAMES)
    .optional()
    .describe('The holdout error minError and maxError compare (default mase); only SKUs whose run ranked by it match'),
  minError: ErrorBound.optional().describe(
    'Only SKUs whose chosen model has at least this holdout error, in the unit of errorMeasure (mape, smape, wape in percent; mae, rmse in demand units; mase unitless)',
  ),
  maxError: ErrorBound.optional().describe(
    'Only SKUs whose chosen model has at most this holdout error, in the unit of errorMeasure (mape, smape, wape in percent; mae, rmse in demand units; mase unitless)',
  ),
  sort: z
    .enum(['sku', 'error'])
    .default('sku')
    .describe(
      'sku (default): by SKU, byte order. error: by holdout error on errorMeasure, largest first (ties in reverse SKU order), ' +
        'only SKUs that have one; its cursor is its own',
    ),
}).superRefine((q, ctx) => {
  if (q.minError !== undefined && q.maxError !== undefined && q.minError > q.maxError) {
    ctx.addIssue({ code: 'custom', path: ['minError'], message: 'must not exceed maxError' })
  }
  if (q.errorMeasure !== undefined && q.minError === undefined && q.maxError === undefined && q.sort !== 'error') {
    ctx.addIssue({ code: 'custom', path: ['errorMeasure'], message: 'needs minError, maxError or sort=error' })
  }
})

/** A SKU's newest published outcome, as the SKU list shows and filters it. */
export const PublishedSummarySchema = z
  .object({
    runId: z.string().describe('The publishing run'),
    model: z.enum(MODEL_NAMES).nullable().describe('The chosen model; null when the item failed'),
    warnings: z.array(z.string()).describe('Warning codes of the item (docs/warnings.md)'),
    failed: z.boolean().describe('The run could not forecast the SKU (its earlier published forecast, if any, is still served)'),
    error: z
      .object({
        measure: z.enum(METRIC_NAMES),
        value: z.number().describe("In the measure's unit: mape, smape, wape in percent; mae, rmse in demand units; mase unitless"),
      })
      .nullable()
      .describe("The chosen model's holdout error named by the run's rankBy; null without a holdout"),
  })
  .meta({ id: 'PublishedSummary' })

export const HistorySummarySchema = z.object({
  sku: z.string(),
  frequency: z.enum(FREQUENCIES),
  firstPeriod: z.string(),
  lastPeriod: z.string(),
  periodCount: z.number().int().min(1),
  tags: z.array(z.string()),
  updatedAt: z.string(),
  published: PublishedSummarySchema.optional().describe("The SKU's newest published outcome; absent until a publishing run includes it"),
})

export const SkuListPage = pageSchema(HistorySummarySchema)

const ColumnName = z.string().min(1).max(100)

export const UploadMode = z
  .enum(UPLOAD_MODES)
  .describe(
    'add: quantities added to the stored periods (incremental transaction files); overwrite: each period sent replaces ' +
      'the stored one, others kept; replace: the upload is the whole history; replace-open-period: the upload is the ' +
      'whole of one open period (month to date) for every stored SKU of its frequency, SKUs left out get 0 there. ' +
      'Default: add for dated rows (transactions), overwrite for period rows and series',
  )

export const UploadQuery = z.object({
  mode: UploadMode.optional(),
  batch: z
    .string()
    .regex(BATCH_ID_PATTERN, 'must be 1-200 visible ASCII characters')
    .optional()
    .describe(
      "The feed's batch id (e.g. its file name): each SKU is written once per batch id while it is remembered " +
        '(UPLOAD_BATCH_TTL_SECONDS, default 35 days), so a resent file is not added twice',
    ),
  openPeriod: PeriodLabel.optional().describe(
    'replace-open-period: the open period (e.g. 2026-12); default the one period every row falls in',
  ),
  closeThrough: PeriodLabel.optional().describe(
    'After the upload is stored, close the frequency\'s periods through this one, as PUT /v1/closed-periods/{frequency} ' +
      'does (zero-demand SKUs carried forward, every history of the frequency rescored): a feed that sends a month\'s ' +
      'last file moves the closed-through period itself. Checked before anything is stored: a period behind the ' +
      'closed-through one is a 409 period-closed',
  ),
  frequency: z.enum(FREQUENCIES).default('month').describe('Bucket of stored histories; dated rows are summed into it (week = ISO week)'),
  duplicates: z
    .enum(DUPLICATE_POLICIES)
    .default('sum')
    .describe('Several rows for one SKU and bucket: sum them (default) or keep the last'),
  skuColumn: ColumnName.default('sku').describe('CSV header of the SKU column'),
  periodColumn: ColumnName.default('period').describe('CSV header of the date or period column'),
  demandColumn: ColumnName.default('demand').describe('CSV header of the demand column'),
  tagsColumn: ColumnName.optional().describe(
    'CSV header of a column of tags, separated by | (category:garden|site:north); a SKU gets all the tags of its rows. Absent: no tags column',
  ),
}).extend(CsvDialectQuery.shape)

export const JsonUpload = z.strictObject({
  mode: UploadMode.optional(),
  series: z.array(z.unknown()).min(1),
})

export const UploadErrorSchema = z.object({
  line: z.number().int().min(1).optional().describe('1-based line of a CSV or NDJSON upload'),
  item: z.number().int().min(0).optional().describe('Index in the JSON series array'),
  column: z.string().optional().describe('CSV column or JSON field'),
  sku: z.string().optional(),
  reason: z.string(),
})

export const UploadReportSchema = z
  .object({
    mode: z.enum(UPLOAD_MODES).describe('The mode applied (the default resolved when none was named)'),
    frequency: z.enum(FREQUENCIES),
    batch: z.string().optional().describe('The feed batch id the upload was sent under'),
    openPeriod: z.string().optional().describe('replace-open-period: the period replaced'),
    rows: z.object({ accepted: z.number().int().min(0), rejected: z.number().int().min(0) }),
    skus: z.object({
      created: z.number().int().min(0),
      updated: z.number().int().min(0),
      rejected: z.number().int().min(0),
      alreadyApplied: z.number().int().min(0).describe('SKUs this batch id had already written: left as they were'),
      zeroed: z.number().int().min(0).describe('replace-open-period: stored SKUs left out of the upload, set to 0 in the open period'),
    }),
    closing: ClosingReportSchema.optional().describe('With closeThrough: what closing the periods did'),
    errors: z.array(UploadErrorSchema).describe('The first 1000 rejections'),
    errorsNotListed: z.number().int().min(0).describe('Rejections beyond the listed ones'),
  })
  .meta({ id: 'UploadReport' })
