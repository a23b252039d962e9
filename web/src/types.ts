/**
 * The API shapes the workbench reads, in the contract's words (docs/http-api.md,
 * /openapi.json). Only the fields the pages use; the server sends more.
 */

export type RunStatus = 'queued' | 'running' | 'succeeded' | 'failed' | 'cancelled'
export const FINISHED_STATUSES: readonly RunStatus[] = ['succeeded', 'failed', 'cancelled']

export interface Failure {
  readonly code: string
  readonly message: string
}

export interface Run {
  readonly id: string
  readonly status: RunStatus
  readonly progress: { readonly total: number; readonly done: number; readonly failed: number }
  readonly createdAt: string
  readonly startedAt: string | null
  readonly finishedAt: string | null
  readonly settings: { readonly horizon?: number; readonly frequency?: string; readonly rankBy?: string }
  readonly summary: {
    readonly rankBy: string
    readonly modelCounts: Readonly<Record<string, number>>
    readonly meanHoldoutError: number | null
  } | null
  readonly failure?: Failure | null
  /** What started the run (GET /v1/runs). */
  readonly origin?: { readonly kind: 'inline' | 'scope' | 'schedule'; readonly scheduleId?: string }
}

export interface SkuSummary {
  readonly sku: string
  readonly frequency: string
  readonly firstPeriod: string
  readonly lastPeriod: string
  readonly periodCount: number
  readonly tags: readonly string[]
  readonly updatedAt: string
  /** The SKU's newest published outcome (GET /v1/skus only). */
  readonly published?: PublishedSummary
}

export interface PublishedSummary {
  readonly runId: string
  readonly model: string | null
  readonly warnings: readonly string[]
  readonly failed: boolean
  readonly error: { readonly measure: string; readonly value: number } | null
}

export interface Page<T> {
  readonly items: readonly T[]
  readonly nextCursor: string | null
}

export interface History extends SkuSummary {
  readonly demand: readonly (number | null)[]
}

export type HoldoutErrors = Readonly<Record<string, number | null>>

export interface Interval {
  readonly level: number
  readonly low: number
  readonly high: number
}

/** An adjustment as a forecast point shows it (docs/adjustments.md): exactly one of setDemand and changePercent. */
export interface AdjustmentOnPoint {
  readonly setDemand?: number
  readonly changePercent?: number
  readonly reason: string
  readonly author: string
  readonly setAt: string
}

export interface ForecastPoint {
  /** The statistical forecast. */
  readonly period: string
  readonly demand: number
  readonly intervals: readonly Interval[]
  /** The demand to plan with: demand with the adjustment applied (served by GET /v1/skus/{sku}/forecast). */
  readonly finalDemand?: number
  readonly adjustment?: AdjustmentOnPoint | null
}

export interface AdjustmentChange {
  readonly setDemand?: number
  readonly changePercent?: number
}

/** One entry of a SKU's adjustment trail. */
export interface TrailEntry {
  readonly at: string
  readonly action: 'set' | 'removed' | 'expired'
  readonly period: string
  readonly author: string
  readonly reason: string
  readonly before: AdjustmentChange | null
  readonly after: AdjustmentChange | null
  readonly statisticalDemand: number | null
  readonly finalDemandBefore: number | null
  readonly finalDemandAfter: number | null
}

export interface Candidate {
  readonly model: string
  readonly family: string
  readonly status: 'scored' | 'skipped' | 'failed'
  readonly holdoutErrors?: HoldoutErrors
  readonly score?: number
  readonly reason?: string
}

export interface Warning {
  readonly code: string
  readonly message: string
}

export interface SkuForecast {
  readonly sku: string
  readonly frequency: string
  readonly model: string
  readonly family: string
  readonly params: Readonly<Record<string, number | readonly number[]>>
  readonly modelChoice: {
    readonly method: string
    readonly rankBy: string
    readonly holdoutPeriods: number
    readonly holdoutOrigins: number
  }
  readonly holdoutErrors: HoldoutErrors | null
  readonly candidates?: readonly Candidate[]
  readonly forecast: readonly ForecastPoint[]
  readonly intervalMethod: string
  readonly warnings: readonly Warning[]
  readonly replenishment?: Readonly<Record<string, unknown>>
  readonly runId: string
  readonly producedAt: string
}

export interface UploadReport {
  readonly mode: string
  readonly frequency: string
  readonly rows: { readonly accepted: number; readonly rejected: number }
  readonly skus: { readonly created: number; readonly updated: number; readonly rejected: number }
  readonly errors: readonly {
    readonly line?: number
    readonly item?: number
    readonly column?: string
    readonly sku?: string
    readonly reason: string
  }[]
  readonly errorsNotListed: number
}

/** RFC 9457 problem details, as every error answer of the API. */
export interface Problem {
  readonly type?: string
  readonly title?: string
  readonly status?: number
  readonly detail?: string
  readonly errors?: readonly { readonly path: string; readonly message: string }[]
}

/** One scored period of GET /v1/skus/{sku}/accuracy. */
export interface ScoredPeriod {
  readonly period: string
  readonly runId: string
  readonly forecastDemand: number
  readonly actualDemand: number
  readonly deviation: number
}

/** GET /v1/skus/{sku}/accuracy (404 until a published forecast of the SKU has been scored). */
export interface SkuAccuracy {
  readonly sku: string
  readonly scoredPeriods: number
  readonly mae: number | null
  readonly bias: number | null
  readonly mape: number | null
  readonly trackingSignal: number | null
  readonly smoothedTrackingSignal: number | null
  readonly flagged: boolean
  readonly flaggedBy: readonly string[]
  readonly trackingLimit: number
  readonly lag: number | null
  readonly periods: readonly ScoredPeriod[]
}

interface ErrorsBy {
  readonly statistical: number | null
  readonly final: number | null
  readonly naive: number | null
}

/** GET /v1/skus/{sku}/value-added: forecast value added (404 until a period is scored). */
export interface SkuValueAdded {
  readonly scoredPeriods: number
  readonly adjustedPeriods: number
  readonly mae: ErrorsBy
  readonly valueAdded: { readonly adjustments: number | null; readonly statistical: number | null; readonly final: number | null }
  readonly byAuthor: readonly { readonly author: string; readonly adjustedPeriods: number; readonly valueAdded: { readonly adjustments: number | null } }[]
}

/** GET /v1/accuracy/by-tag. */
export interface TagAccuracy {
  readonly tag: string
  readonly lag: number | null
  readonly skus: number
  readonly scoredPeriods: number
  readonly mae: number | null
  readonly bias: number | null
  readonly wape: number | null
  readonly flaggedSkus: number
}

/** GET /v1/value-added/by-tag. */
export interface TagValueAdded extends SkuValueAdded {
  readonly tag: string
  readonly skus: number
}

export type WorklistKind = 'biased' | 'large-change' | 'failed' | 'short-history'
export const WORKLIST_KINDS: readonly WorklistKind[] = ['biased', 'large-change', 'failed', 'short-history']

export interface WorklistReview {
  readonly state: 'acknowledged' | 'snoozed'
  readonly note: string
  readonly at: string
}

/** GET /v1/worklist items. */
export interface WorklistItem {
  readonly sku: string
  readonly kinds: readonly WorklistKind[]
  readonly trackingSignal: { readonly trackingSignal: number | null; readonly smoothedTrackingSignal: number | null; readonly scoredPeriods: number } | null
  readonly change: { readonly percent: number | null; readonly commonPeriods: number } | null
  readonly failure: Failure | null
  readonly historyLength: number | null
  readonly review: WorklistReview | null
}

export type WorklistCounts = Readonly<Record<WorklistKind, number>>
