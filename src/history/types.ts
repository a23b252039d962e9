import type { Frequency } from '../engine/index.js'

/** A SKU's stock policy as stored with its history (validated by the StockPolicy schema in schemas/run.ts). */
export interface StockPolicy {
  readonly leadTimeDays?: number
  readonly leadTimePeriods?: number
  readonly leadTimeSdDays?: number
  readonly leadTimeSdPeriods?: number
  readonly reviewDays?: number
  readonly reviewPeriods?: number
  readonly serviceLevel?: number
  readonly minimumOrder?: number
  readonly packSize?: number
}

/** Shared shapes of history parsing and ingest. Pure data. */

/**
 * How an upload meets the stored history of a SKU:
 *  - add: uploaded quantities are added to the stored periods (incremental transaction files);
 *  - overwrite: each period sent replaces the stored one, other periods stay;
 *  - replace: the upload is the SKU's whole history;
 *  - replace-open-period: the upload is the whole of one open period for every stored SKU of
 *    its frequency (a month-to-date file); SKUs left out of it get 0 in that period.
 * Without a mode, dated transaction rows add and period rows or series overwrite (history/ingest.ts).
 */
export const UPLOAD_MODES = ['add', 'overwrite', 'replace', 'replace-open-period'] as const
export type UploadMode = (typeof UPLOAD_MODES)[number]

/** A feed batch id: 1-200 visible ASCII characters (a file name or the ERP's export id). */
export const BATCH_ID_PATTERN = /^[\x21-\x7e]{1,200}$/

export const DUPLICATE_POLICIES = ['sum', 'last'] as const
export type DuplicatePolicy = (typeof DUPLICATE_POLICIES)[number]

/** Most row errors listed in one upload report; the rest are only counted. */
export const MAX_LISTED_ERRORS = 1000

/** Most tags on one SKU. */
export const MAX_TAGS = 32

/** A tag: category or location code such as `category:garden` or `site:north`. */
export const TAG_PATTERN = /^[A-Za-z0-9][A-Za-z0-9._:/=-]{0,63}$/

/** One rejected row, series or SKU. `line` is the 1-based physical line of the upload. */
export interface UploadError {
  readonly line?: number
  /** Index in the JSON `series` array. */
  readonly item?: number
  /** CSV column name, or the JSON field path (`values[3]`). */
  readonly column?: string
  readonly sku?: string
  readonly reason: string
}

/**
 * New data for one SKU, as a dense run of periods from `startOrdinal`
 * (engine period ordinals of `frequency`). `null` marks a missing period.
 * `tags` absent: the stored tags are kept.
 */
export interface IncomingHistory {
  readonly frequency: Frequency
  readonly startOrdinal: number
  readonly demand: readonly (number | null)[]
  readonly tags?: readonly string[]
  /** The SKU's stock policy; absent: the stored one is kept. */
  readonly replenishment?: StockPolicy
}

/** A history as stored for one SKU. */
export interface HistoryData {
  readonly frequency: Frequency
  /** Label of the first period, e.g. `2024-03`. */
  readonly firstPeriod: string
  readonly demand: readonly (number | null)[]
  readonly tags: readonly string[]
  /** The SKU's stock policy (replenishment parameters), when one was given. */
  readonly replenishment?: StockPolicy
}

/** Where a row or series came from, for error reports. */
export interface Origin {
  readonly line?: number
  readonly item?: number
}
