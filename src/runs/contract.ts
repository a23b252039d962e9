import type { ForecastResult, Frequency, ModelName, MetricName, ReplenishmentFigures } from '../engine/index.js'
import type { RunRequest, RunScope, RunSettings } from '../schemas/run.js'

/**
 * The run contract: what the HTTP layer, schedules and the queue exchange
 * about runs and their results (the queue and storage implement it).
 */

/** What a run announces when it ends (callbacks are called for these). */
export const RUN_EVENTS = ['run.succeeded', 'run.failed', 'run.cancelled'] as const
export type RunEvent = (typeof RUN_EVENTS)[number]

export const RUN_STATUSES = ['queued', 'running', 'succeeded', 'failed', 'cancelled'] as const
export type RunStatus = (typeof RUN_STATUSES)[number]

/** What started a run: inline series, stored histories named by a scope, or a schedule's firing. */
export const RUN_ORIGIN_KINDS = ['inline', 'scope', 'schedule'] as const
export type RunOriginKind = (typeof RUN_ORIGIN_KINDS)[number]

/** A run's origin; `scheduleId` is set exactly when `kind` is 'schedule'. */
export interface RunOrigin {
  readonly kind: RunOriginKind
  readonly scheduleId?: string
}

export interface RunRecord {
  readonly id: string
  readonly tenant: string
  readonly status: RunStatus
  /** Series in the run; series finished so far (including failed ones); series the engine rejected. */
  readonly progress: { readonly total: number; readonly done: number; readonly failed: number }
  /** ISO-8601 timestamps. */
  readonly createdAt: string
  readonly startedAt: string | null
  readonly finishedAt: string | null
  readonly settings: RunSettings
  /** The stored histories the run covers; null for a run over inline series. */
  readonly scope: RunScope | null
  /** What started the run. */
  readonly origin: RunOrigin
  /** Present once the run has succeeded. */
  readonly summary: RunSummary | null
  /** Why a run failed as a whole (a series the engine refused is a failed item instead). */
  readonly failure: Failure | null
}

export interface RunSummary {
  readonly rankBy: MetricName
  /** How many SKUs each model was chosen for. */
  readonly modelCounts: Partial<Record<ModelName, number>>
  /** Mean holdout error of the chosen models on `rankBy`, over SKUs where it is defined. */
  readonly meanHoldoutError: number | null
}

/** Why something failed: a result item, a run, a callback delivery attempt, a schedule firing. */
export interface Failure {
  readonly code: string
  readonly message: string
}

/** A SKU the engine forecast, as stored and served (fields in the order they are served). */
export type ForecastItem = { readonly sku: string; readonly frequency: Frequency } & Pick<
  ForecastResult,
  'model' | 'family' | 'params' | 'modelChoice' | 'holdoutErrors' | 'candidates' | 'forecast' | 'intervalMethod' | 'warnings'
> & {
    /** Present when the run asked for replenishment figures. */
    readonly replenishment?: ReplenishmentFigures
  }

/** A SKU the engine could not forecast. */
export interface FailedItem {
  readonly sku: string
  readonly frequency: Frequency
  readonly failure: Failure
}

/** One SKU's outcome in a run. */
export type ResultItem = ForecastItem | FailedItem

export interface ResultPage {
  readonly items: readonly ResultItem[]
  readonly nextCursor: string | null
}

/** Which runs GET /v1/runs lists; every given filter must hold. */
export interface RunListFilter {
  readonly status?: RunStatus
  readonly origin?: RunOriginKind
  readonly scheduleId?: string
  /** Created at or after this instant (ms since the epoch). */
  readonly createdFromMs?: number
  /** Created before this instant (ms since the epoch). */
  readonly createdToMs?: number
}

/** A page of runs, newest first. */
export interface RunPage {
  readonly items: readonly RunRecord[]
  readonly nextCursor: string | null
}

export interface LatestForecast {
  readonly runId: string
  readonly producedAt: string
  readonly item: ResultItem
}

/**
 * What the HTTP layer needs from the run machinery. Every method is scoped to a
 * tenant: another tenant's run or SKU is simply not found (null).
 */
export interface RunGateway {
  /** Validated request in, queued run out. Splits the series into chunk jobs. */
  submit(tenant: string, request: RunRequest): Promise<RunRecord>
  /**
   * submit for inline series already checked (checkRunOptions, checkUniqueSkus,
   * checkInlineOptions) and cut into chunk inputs of `chunkSize` series by the caller
   * (a large body, on a thread): `total` series in `inputs`.
   */
  submitPrepared?(tenant: string, settings: RunSettings, total: number, inputs: readonly (string | Uint8Array)[]): Promise<RunRecord>
  /** Series per chunk input, for callers of submitPrepared. */
  readonly chunkSize?: number
  /**
   * Queue a run over stored histories, read in batches straight into chunk inputs.
   * Optional: gateways without stored histories leave it out (the route answers 503).
   * `origin` defaults to { kind: 'scope' }; a schedule's firing passes { kind: 'schedule', scheduleId }.
   * @throws RunInputError('empty-scope') when the scope matches no history.
   */
  submitScope?(tenant: string, settings: RunSettings, scope: RunScope, origin?: RunOrigin): Promise<{ record: RunRecord; missingSkus: number }>
  get(tenant: string, runId: string): Promise<RunRecord | null>
  /**
   * The tenant's runs, newest first, filtered; a page may hold fewer than `limit` runs when
   * the filters skip many (nextCursor null only at the end). Optional: without it GET /v1/runs answers 503.
   * @throws CursorError on a cursor this service did not issue.
   */
  listRuns?(tenant: string, filter: RunListFilter, page: { readonly limit: number; readonly cursor?: string }): Promise<RunPage>
  results(
    tenant: string,
    runId: string,
    page: { readonly limit: number; readonly cursor?: string; readonly sku?: string },
  ): Promise<ResultPage | null>
  /**
   * The same page as its JSON body, UTF-8: the text JSON.stringify(results(...))
   * gives, built from the stored items without decoding them. Optional: without
   * it the route serialises `results`.
   */
  resultsJson?(
    tenant: string,
    runId: string,
    page: { readonly limit: number; readonly cursor?: string; readonly sku?: string; readonly view?: 'full' | 'compact' },
  ): Promise<Buffer | null>
  /** Cancel a queued or running run; a finished run is returned unchanged. */
  cancel(tenant: string, runId: string): Promise<RunRecord | null>
  latestForecast(tenant: string, sku: string): Promise<LatestForecast | null>
  /**
   * One step of a scan over the tenant's current published forecasts: cursor '0'
   * starts it, and the returned cursor is '0' when it is done. A SKU may come twice
   * (HSCAN); a SKU whose run's results expired is left out. Optional, as publishedOf.
   */
  scanPublished?(tenant: string, cursor: string, count: number): Promise<{ forecasts: LatestForecast[]; cursor: string }>
  /** The current published forecasts of these SKUs, in order (null where none or expired). Optional: without them the bulk export answers 503. */
  publishedOf?(tenant: string, skus: readonly string[]): Promise<(LatestForecast | null)[]>
  /** Forget a SKU's latest forecast (its history was deleted). Optional: gateways without stored forecasts leave it out. */
  forgetLatestForecast?(tenant: string, sku: string): Promise<void>
  /** Throws when Redis or the queue is not usable (readiness). */
  ping(): Promise<void>
  /**
   * Queue depth (chunk jobs by state) for /metrics; optionally the service-wide
   * runs by status and worker fit counters kept in Redis (storage/runs/stats-store.ts).
   */
  stats(): Promise<{
    readonly waiting: number
    readonly active: number
    readonly delayed: number
    readonly failed: number
    readonly runs?: Readonly<Record<RunStatus, number>>
    readonly fits?: FitStats
  }>
}

/** Worker fit counters kept in Redis for /metrics (storage/runs/stats-store.ts). */
export interface FitStats {
  readonly ok: number
  readonly error: number
  /** Cumulative counts per bound of FIT_BUCKETS_SECONDS, then +Inf (= count). */
  readonly buckets: readonly number[]
  readonly sum: number
  readonly count: number
}
