import { z } from 'zod'
import { DEFAULT_SEASON_LENGTH, FREQUENCIES, METRIC_NAMES, MODEL_NAMES, MODEL_SEARCHES, SERVICE_LEVEL_MAX, SERVICE_LEVEL_MIN } from '../engine/index.js'
import { TAG_PATTERN, type StockPolicy as StoredStockPolicy } from '../history/types.js'
import { MAX_FIELD_ERRORS } from '../errors.js'

/**
 * The request contract shared by `POST /v1/forecast`, `POST /v1/runs` and the
 * chunk job payloads. Run-level settings apply to every series; per-series
 * `frequency`, `firstPeriod` and `seasonLength` override them.
 */

export const MAX_POINTS_PER_SERIES = 10_000
export const MAX_HORIZON = 1_000

/**
 * Largest magnitude of a demand value. Far beyond any real quantity, and small
 * enough that sums of squares over a whole series stay finite in doubles
 * (values near 1e308 overflowed error metrics to Infinity). Common practice:
 * stay well under 2^53 ~ 9e15, where doubles still count whole units.
 */
export const MAX_ABS_VALUE = 1e15

/** One period's demand: a finite number within +-MAX_ABS_VALUE, or null for a missing period. */
export const DemandValue = z
  .number()
  .min(-MAX_ABS_VALUE, 'must be between -1e15 and 1e15')
  .max(MAX_ABS_VALUE, 'must be between -1e15 and 1e15')
  .nullable()

/**
 * A SKU has no control characters (C0 and DEL) and is well-formed Unicode: a
 * lone UTF-16 surrogate (JSON allows "\ud800") becomes U+FFFD when stored as
 * UTF-8, so two different SKUs would collide in storage.
 */
export const SKU_PATTERN = /^(?:[^\u0000-\u001f\u007f\ud800-\udfff]|[\ud800-\udbff][\udc00-\udfff])+$/
/** Period labels: 2024, 2024-Q2, 2024-03, 2024-W09 or 2024-03-05. */
export const PERIOD_PATTERN = /^\d{4}(-(Q[1-4]|W\d{2}|\d{2}(-\d{2})?))?$/

export const Sku = z
  .string()
  .min(1)
  .max(200)
  .regex(SKU_PATTERN, 'must not contain control characters or lone UTF-16 surrogates')
  .describe('Stock-keeping unit code, unique within the tenant')

export const PeriodLabel = z
  .string()
  .regex(PERIOD_PATTERN, 'must look like 2024, 2024-Q2, 2024-03, 2024-W09 or 2024-03-05')
  .describe(
    'Label of the first period in the frequency: 2024 (year), 2024-Q2 (quarter), 2024-03 (month), 2024-W09 ' +
      '(ISO week) or 2024-03-05 (day). For weekly demand a calendar date also works and means its ISO week.',
  )

/** The description lists the engine's own defaults, so the document cannot drift from them. */
const SeasonLength = z
  .number()
  .int()
  .min(1)
  .max(366)
  .describe(
    `Periods per season (1: no season); default by frequency: ${Object.entries(DEFAULT_SEASON_LENGTH)
      .map(([f, m]) => `${f} ${m}`)
      .join(', ')}`,
  )

/** Longest duration accepted in days: ten years. */
const MAX_DAYS = 3660

/** Pairs of a policy that say one thing in days or in periods: at most one of each pair. */
const DURATION_PAIRS = [
  ['leadTimeDays', 'leadTimePeriods'],
  ['leadTimeSdDays', 'leadTimeSdPeriods'],
  ['reviewDays', 'reviewPeriods'],
] as const

/**
 * A stock policy: the replenishment parameters of one SKU (stored with its
 * history or given with an inline series) or a run's defaults for them.
 * Durations in days are converted to each SKU's frequency (docs/replenishment-and-callbacks.md);
 * durations in periods count periods of the SKU's own frequency (per SKU) or of the run's `frequency` (run level).
 */
export const StockPolicy = z
  .strictObject({
    leadTimeDays: z.number().gt(0).max(MAX_DAYS).optional().describe('Lead time in calendar days'),
    leadTimePeriods: z.number().gt(0).max(MAX_HORIZON).optional().describe('Lead time in periods (may be fractional)'),
    leadTimeSdDays: z.number().min(0).max(MAX_DAYS).optional().describe('Standard deviation of the lead time in days (default 0: a fixed lead time)'),
    leadTimeSdPeriods: z.number().min(0).max(MAX_HORIZON).optional().describe('Standard deviation of the lead time in periods'),
    reviewDays: z.number().min(0).max(MAX_DAYS).optional().describe('Review period in days (default 0: continuous review)'),
    reviewPeriods: z.number().min(0).max(MAX_HORIZON).optional().describe('Review period in periods'),
    serviceLevel: z
      .number()
      .gt(SERVICE_LEVEL_MIN)
      .lt(SERVICE_LEVEL_MAX)
      .optional()
      .describe('Target cycle service level, e.g. 0.95 (in (0.5, 0.9999))'),
    minimumOrder: z.number().min(0).max(MAX_ABS_VALUE).optional().describe('Smallest order in units (default 0)'),
    packSize: z.number().gt(0).max(MAX_ABS_VALUE).optional().describe('Units per pack; orders are whole packs (default 1)'),
  })
  .superRefine((policy, ctx) => {
    for (const [days, periods] of DURATION_PAIRS) {
      if (policy[days] !== undefined && policy[periods] !== undefined) {
        ctx.addIssue({ code: 'custom', path: [periods], message: `give ${days} or ${periods}, not both` })
      }
    }
  })
  .meta({ id: 'StockPolicy' })
export type StockPolicy = z.infer<typeof StockPolicy>

/** Compile-time check: the stored policy's interface (history/types.ts) has exactly the schema's fields. */
const samePolicyFields: [keyof StockPolicy] extends [keyof StoredStockPolicy] ? ([keyof StoredStockPolicy] extends [keyof StockPolicy] ? true : false) : false = true
void samePolicyFields

export const ReplenishmentSettings = StockPolicy.describe(
  'Ask for lead-time demand, safety stock, reorder point and order quantity per SKU (estimates to review). ' +
    "These are defaults: each SKU's own policy (stored with its history or given with the series) wins field by field",
)

export const SeriesItem = z.strictObject({
  sku: Sku,
  firstPeriod: PeriodLabel.optional(),
  demand: z
    .array(DemandValue)
    .min(1)
    .max(MAX_POINTS_PER_SERIES)
    .describe('Demand per period, oldest first; null marks a missing period'),
  frequency: z.enum(FREQUENCIES).optional().describe("This series' frequency; default the run's"),
  seasonLength: SeasonLength.optional(),
  replenishment: StockPolicy.optional().describe("This SKU's stock policy; wins over the run's replenishment field by field"),
})
export type SeriesItem = z.infer<typeof SeriesItem>

/**
 * A series as a chunk job reads it: a SeriesItem, plus for a stored history
 * fitted with its open periods (`openPeriods: "include"`) how many there are,
 * so the result item can say so. Never part of a request.
 */
export const ChunkSeriesItem = SeriesItem.extend({
  openPeriods: z.number().int().min(1).optional(),
  /** A new product's peer level (runs/peer-levels.ts), when the run asked for newProductPeers and enough peers exist. */
  peerLevel: z.object({ tag: z.string(), level: z.number(), peers: z.number().int().min(1) }).optional(),
})
export type ChunkSeriesItem = z.infer<typeof ChunkSeriesItem>

export const CallbackUrl = z
  .string()
  .max(2048)
  .url()
  .refine((u) => /^https?:\/\//i.test(u), 'must be an http or https URL')
  .refine((u) => {
    try {
      const url = new URL(u)
      return url.username === '' && url.password === ''
    } catch {
      return false
    }
  }, 'must not contain credentials')
  .describe('Called (signed POST) when the run ends; see /v1/callbacks for the signature')

export const RunSettings = z.strictObject({
  horizon: z
    .number()
    .int()
    .min(1)
    .max(MAX_HORIZON)
    .describe(
      "Periods to forecast, of the run's frequency; for a SKU of another frequency converted through days (rounded up), " +
        'with the warning period-setting-converted',
    ),
  frequency: z.enum(FREQUENCIES).default('month'),
  seasonLength: SeasonLength.optional(),
  holdoutPeriods: z
    .number()
    .int()
    .min(1)
    .max(MAX_HORIZON)
    .optional()
    .describe("Periods held back to rank the candidates, of the run's frequency (converted like horizon, rounded)"),
  holdoutOrigins: z
    .number()
    .int()
    .min(1)
    .max(12)
    .optional()
    .describe(
      'Rolling forecast origins the holdout errors are averaged over. Default: for a season length of 1 (yearly) the horizon, at most 12, ' +
        'each origin one period earlier with a one-period holdout; otherwise 1',
    ),
  rankBy: z.enum(METRIC_NAMES).default('mase').describe('The holdout error that ranks the candidates'),
  models: z.array(z.enum(MODEL_NAMES)).min(1).optional().describe('Candidates; default all the history allows'),
  intervalLevels: z
    .array(z.number().gt(0).lt(100))
    .max(5)
    .default([80, 95])
    .describe('Central prediction-interval levels in percent'),
  quantiles: z
    .array(z.number().gt(0).lt(1))
    .max(20)
    .optional()
    .describe(
      'Quantiles to report per forecast point, e.g. [0.5, 0.9, 0.95] for replenishment: the demand that actual demand stays at or below ' +
        'with that probability. Estimates: they assume the past error pattern continues',
    ),
  modelSearch: z
    .enum(MODEL_SEARCHES)
    .optional()
    .describe('fast (default) or thorough: at least 3 rolling holdout origins, more calibration origins and a wider pool of models, at several times the cost'),
  missingPeriods: z.enum(['zero', 'interpolate']).default('zero').describe('How missing periods (null) are filled'),
  allowNegativeDemand: z.boolean().default(false),
  keepLeadingZeros: z.boolean().default(false),
  replenishment: ReplenishmentSettings.optional(),
  callbackUrl: CallbackUrl.optional(),
  publish: z
    .boolean()
    .optional()
    .describe(
      'true: the results become the SKUs\' published forecasts (served at /v1/skus/{sku}/forecast, scored against ' +
        'actuals); false: a what-if run, readable only under the run. Default: true for stored histories (scope) ' +
        'and schedules, false for inline series.',
    ),
  newProductPeers: z
    .strictObject({
      tagPrefix: z
        .string()
        .min(1)
        .max(64)
        .describe('Peers are the SKUs sharing the SKU\'s first tag with this prefix, e.g. "category:"'),
    })
    .optional()
    .describe(
      'New products (fewer than 10 periods) are blended with the median recent level of SKUs sharing their tag, weighted ' +
        'n / (n + 6) on their own forecast, with the warning peer-level-blended (at least 3 peers). Only for stored histories.',
    ),
  openPeriods: z
    .enum(['exclude', 'include'])
    .optional()
    .describe(
      'Stored periods after the tenant\'s closed-through period of their frequency: exclude (default) leaves them out ' +
        'of the fit; include fits them with the warning open-periods-fitted. Only for stored histories.',
    ),
})
export type RunSettings = z.infer<typeof RunSettings>

/**
 * A SKU appears at most once per request: a second occurrence is a 400 naming
 * it (`series[i].sku`) rather than a silent "later one wins".
 */
function refuseDuplicateSkus(series: readonly { sku: string }[] | undefined, ctx: z.RefinementCtx): void {
  if (series === undefined) return
  const seen = new Set<string>()
  let found = 0
  for (let i = 0; i < series.length && found <= MAX_FIELD_ERRORS; i++) {
    const sku = series[i]!.sku
    if (seen.has(sku)) {
      // One past the reported ones tells the error handler there are more; a million copies of one SKU make no more issues.
      ctx.addIssue({ code: 'custom', path: ['series', i, 'sku'], message: `SKU ${JSON.stringify(sku)} appears more than once` })
      found++
    }
    seen.add(sku)
  }
}

export const RunRequest = RunSettings.extend({
  series: z.array(SeriesItem).min(1),
}).superRefine((body, ctx) => refuseDuplicateSkus(body.series, ctx))
export type RunRequest = z.infer<typeof RunRequest>

/** Most SKUs a scope may name in `skus`. */
export const MAX_SCOPE_SKUS = 100_000

/**
 * Which stored histories a run or schedule covers: `{ "skus": [...] }`,
 * `{ "tags": [...] }` (SKUs carrying every listed tag) or `{ "all": true }`.
 * One object with exactly one of the three, so a bad entry is named
 * (`scope.skus[3]`) rather than reported as "no alternative matched".
 */
export const RunScope = z
  .strictObject({
    skus: z
      .array(Sku)
      .min(1)
      .max(MAX_SCOPE_SKUS)
      .optional()
      .describe('These SKUs; a SKU without a stored history is a 400 listing it (for schedules: when the schedule is created)'),
    tags: z
      .array(z.string().regex(TAG_PATTERN, 'is not a valid tag'))
      .min(1)
      .max(10)
      .optional()
      .describe('SKUs carrying every listed tag'),
    all: z.literal(true).optional().describe('Every SKU with a stored history'),
  })
  .superRefine((scope, ctx) => {
    const given = (['skus', 'tags', 'all'] as const).filter((f) => scope[f] !== undefined)
    if (given.length === 0) ctx.addIssue({ code: 'custom', path: [], message: 'give one of skus, tags or all' })
    for (const extra of given.slice(1)) {
      ctx.addIssue({ code: 'custom', path: [extra], message: `give exactly one of skus, tags or all (got ${given.join(', ')})` })
    }
  })
  .meta({ id: 'Scope' })
export type RunScope = { readonly skus: string[] } | { readonly tags: string[] } | { readonly all: true }

/** The scope as the schema parsed it, narrowed to the one key it holds. */
export function toRunScope(scope: z.infer<typeof RunScope>): RunScope {
  if (scope.skus !== undefined) return { skus: scope.skus }
  if (scope.tags !== undefined) return { tags: scope.tags }
  return { all: true }
}

/**
 * `POST /v1/runs`: the settings plus exactly one source of series: inline
 * `series`, or stored histories named by `scope`.
 */
export const RunSubmission = RunSettings.extend({
  series: z.array(SeriesItem).min(1).optional().describe('Series given inline'),
  scope: RunScope.optional().describe('Forecast stored histories instead of inline series'),
}).superRefine((body, ctx) => {
  refuseDuplicateSkus(body.series, ctx)
  const given = (['series', 'scope'] as const).filter((f) => body[f] !== undefined)
  if (given.length === 0) ctx.addIssue({ code: 'custom', path: ['series'], message: 'give series, or stored histories with scope' })
  if (given.length === 2) ctx.addIssue({ code: 'custom', path: ['scope'], message: 'give either series or scope, not both' })
})
export type RunSubmission = z.infer<typeof RunSubmission>
