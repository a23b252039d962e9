import { formatPeriod, type Frequency } from '../engine/index.js'
import type { PendingHistory } from './accumulator.js'
import type { GatheredUpload } from './staged-upload.js'
import { mergeHistory, zeroPeriod } from './merge.js'
import type { HistoryData, UploadError, UploadMode } from './types.js'

/** What one SKU's write came to: written, skipped because its feed batch had written it already, or refused. */
export type WriteOutcome = { outcome: 'created' | 'updated' | 'already-applied' } | { reason: string }

/** A feed batch id and how long the store remembers which SKUs it wrote. */
export interface FeedBatch {
  readonly id: string
  readonly ttlSeconds: number
}

/**
 * Where merged histories go. `apply` reads each SKU's stored history, asks
 * `merge` for the new one and writes it atomically per SKU (retrying the SKU
 * if it changed meanwhile). A merge that returns `reason` leaves the SKU as it was.
 * With a feed batch, a SKU the batch already wrote is left alone (`already-applied`),
 * checked in the same atomic step as the write.
 */
export interface HistoryWriter {
  apply(
    tenant: string,
    batch: readonly PendingHistory[],
    merge: (current: HistoryData | null, pending: PendingHistory) => { data: HistoryData } | { reason: string },
    /**
     * readValues false: `current.values` may be empty (the merge replaces them).
     * carriedForward: the write only carries the history forward (a closing's zeros),
     * so it leaves the SKU's last-write time, which idle-history retention reads, as it was.
     */
    opts?: { readonly readValues?: boolean; readonly feedBatch?: FeedBatch; readonly carriedForward?: boolean },
  ): Promise<readonly WriteOutcome[]>
  /** Every stored history of the tenant, a page at a time (replace-open-period visits the SKUs left out). */
  select(tenant: string, scope: { readonly all: true }, batchSize: number): AsyncIterable<readonly (HistoryData & { readonly sku: string })[]>
}

export interface UploadReport {
  readonly mode: UploadMode
  readonly frequency: Frequency
  /** The feed batch id the upload was sent under, if any. */
  readonly batch?: string
  /** replace-open-period: the period the upload replaced. */
  readonly openPeriod?: string
  /** Input rows (CSV or NDJSON lines, JSON series) stored and refused. */
  readonly rows: { readonly accepted: number; readonly rejected: number }
  readonly skus: {
    readonly created: number
    readonly updated: number
    readonly rejected: number
    /** SKUs the same feed batch had already written: left as they were. */
    readonly alreadyApplied: number
    /** replace-open-period: stored SKUs left out of the upload whose open period was set to 0. */
    readonly zeroed: number
  }
  /** The first rejections, in input order per phase (rows first, then SKUs). */
  readonly errors: readonly UploadError[]
  /** Rejections beyond the listed ones. */
  readonly errorsNotListed: number
}

/**
 * The mode of an upload that names none. A dated row is one transaction (an
 * order line): a file of them is a slice of a period's events, so its
 * quantities are added to what is stored. A period row or series is the
 * period's total as the sender knows it: it overwrites, so a resend changes nothing.
 * @returns the mode, or why the upload needs one named (it mixes both kinds)
 */
export function defaultMode(kinds: { readonly dated: number; readonly period: number }): { mode: UploadMode } | { reason: string } {
  if (kinds.dated > 0 && kinds.period > 0) {
    return {
      reason: `the upload mixes ${kinds.dated} dated row(s) (added by default) and ${kinds.period} period row(s) or series (overwriting by default); name the mode`,
    }
  }
  return { mode: kinds.dated > 0 ? 'add' : 'overwrite' }
}

/** SKUs written per round trip. */
const WRITE_BATCH = 500

/** Merge every gathered SKU into the store, a part at a time, and report what was accepted and refused. */
export async function commitUpload(
  upload: GatheredUpload,
  writer: HistoryWriter,
  tenant: string,
  mode: UploadMode,
  opts: { readonly feedBatch?: FeedBatch; readonly openPeriod?: number } = {},
): Promise<UploadReport> {
  const open = opts.openPeriod
  if (mode === 'replace-open-period' && open === undefined) throw new Error('replace-open-period needs the open period')
  const errors = upload.errors
  let accepted = 0
  let created = 0
  let updated = 0
  let alreadyApplied = 0
  let rejected = 0
  const sent = new Set<string>()
  const merge = (current: HistoryData | null, p: PendingHistory) => {
    if (open !== undefined) {
      const first = p.incoming.startOrdinal
      const last = first + p.incoming.demand.length - 1
      if (first !== open || last !== open) {
        const f = p.incoming.frequency
        return { reason: `rows for ${formatPeriod(first, f)}..${formatPeriod(last, f)}; this upload replaces only the open period ${formatPeriod(open, f)}` }
      }
    }
    return mergeHistory(current, p.incoming, mode)
  }
  const writeOpts = { readValues: mode !== 'replace', ...(opts.feedBatch === undefined ? {} : { feedBatch: opts.feedBatch }) }
  let batch: PendingHistory[] = []
  const flush = async () => {
    const results = await writer.apply(tenant, batch, merge, writeOpts)
    results.forEach((r, i) => {
      const p = batch[i]!
      if ('reason' in r) {
        errors.add({ ...p.origin, sku: p.sku, reason: r.reason }, p.rows)
        return
      }
      accepted += p.rows
      if (r.outcome === 'created') created++
      else if (r.outcome === 'updated') updated++
      else alreadyApplied++
    })
    batch = []
  }
  const errorCount = () => errors.listed.length + errors.notListed
  for await (const part of upload.parts()) {
    // From here on every new error of the part is one refused SKU (too long while draining, or refused by the merge).
    const before = errorCount()
    for (const pending of part.drain()) {
      if (open !== undefined) sent.add(pending.sku)
      batch.push(pending)
      if (batch.length >= WRITE_BATCH) await flush()
    }
    if (batch.length > 0) await flush()
    rejected += errorCount() - before
  }
  const zeroed = open === undefined ? 0 : await zeroLeftOut(writer, tenant, upload, open, sent)
  return {
    mode,
    frequency: upload.frequency,
    ...(opts.feedBatch === undefined ? {} : { batch: opts.feedBatch.id }),
    ...(open === undefined ? {} : { openPeriod: formatPeriod(open, upload.frequency) }),
    rows: { accepted, rejected: errors.rejectedRows },
    skus: { created, updated, rejected, alreadyApplied, zeroed },
    errors: errors.listed,
    errorsNotListed: errors.notListed,
  }
}

/**
 * replace-open-period: a stored SKU of the upload's frequency that the upload
 * left out had no demand in the open period so far (a month-to-date file lists
 * every SKU with demand), so its stored value there becomes 0. Histories that
 * end before the open period are left alone: moving them forward is closing a period.
 * @returns how many SKUs were set to 0
 */
async function zeroLeftOut(writer: HistoryWriter, tenant: string, acc: GatheredUpload, open: number, sent: ReadonlySet<string>): Promise<number> {
  let zeroed = 0
  const merge = (current: HistoryData | null, p: PendingHistory): { data: HistoryData } | { reason: string } => {
    const data = current === null || current.frequency !== acc.frequency ? null : zeroPeriod(current, open)
    return data === null ? { reason: `${p.sku} no longer reaches the open period` } : { data }
  }
  for await (const page of writer.select(tenant, { all: true }, WRITE_BATCH)) {
    const todo: PendingHistory[] = []
    for (const h of page) {
      if (sent.has(h.sku) || h.frequency !== acc.frequency) continue
      const zero = zeroPeriod(h, open)
      if (zero === null || zero.demand.every((v, i) => v === h.demand[i])) continue
      todo.push({ sku: h.sku, incoming: { frequency: h.frequency, startOrdinal: open, demand: [0] }, rows: 0, origin: {} })
    }
    if (todo.length === 0) continue
    const results = await writer.apply(tenant, todo, merge, { readValues: true })
    results.forEach((r, i) => {
      if ('reason' in r) acc.errors.add({ sku: todo[i]!.sku, reason: `not set to 0 in the open period: ${r.reason}` }, 0)
      else zeroed++
    })
  }
  return zeroed
}
