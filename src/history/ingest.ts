import type { Frequency } from '../engine/index.js'
import type { HistoryAccumulator, PendingHistory } from './accumulator.js'
import { mergeHistory } from './merge.js'
import type { HistoryData, UploadError, UploadMode } from './types.js'

/**
 * Where merged histories go. `apply` reads each SKU's stored history, asks
 * `merge` for the new one and writes it atomically per SKU (retrying the SKU
 * if it changed meanwhile). A merge that returns `reason` leaves the SKU as it was.
 */
export interface HistoryWriter {
  apply(
    tenant: string,
    batch: readonly PendingHistory[],
    merge: (current: HistoryData | null, pending: PendingHistory) => { data: HistoryData } | { reason: string },
    /** readValues false: `current.values` may be empty (the merge replaces them). */
    opts?: { readonly readValues?: boolean },
  ): Promise<readonly ({ outcome: 'created' | 'updated' } | { reason: string })[]>
}

export interface UploadReport {
  readonly mode: UploadMode
  readonly frequency: Frequency
  /** Input rows (CSV or NDJSON lines, JSON series) stored and refused. */
  readonly rows: { readonly accepted: number; readonly rejected: number }
  readonly skus: { readonly created: number; readonly updated: number; readonly rejected: number }
  /** The first rejections, in input order per phase (rows first, then SKUs). */
  readonly errors: readonly UploadError[]
  /** Rejections beyond the listed ones. */
  readonly errorsNotListed: number
}

/** SKUs written per round trip. */
const WRITE_BATCH = 500

/** Merge every gathered SKU into the store and report what was accepted and refused. */
export async function commitUpload(
  acc: HistoryAccumulator,
  writer: HistoryWriter,
  tenant: string,
  mode: UploadMode,
): Promise<UploadReport> {
  let accepted = 0
  let created = 0
  let updated = 0
  const merge = (current: HistoryData | null, p: PendingHistory) => mergeHistory(current, p.incoming, mode)
  let batch: PendingHistory[] = []
  const flush = async () => {
    const results = await writer.apply(tenant, batch, merge, { readValues: mode === 'append' })
    results.forEach((r, i) => {
      const p = batch[i]!
      if ('reason' in r) {
        acc.errors.add({ ...p.origin, sku: p.sku, reason: r.reason }, p.rows)
        return
      }
      accepted += p.rows
      if (r.outcome === 'created') created++
      else updated++
    })
    batch = []
  }
  const errorCount = () => acc.errors.listed.length + acc.errors.notListed
  // From here on every new error is one refused SKU (too long while draining, or refused by the merge).
  const rowErrors = errorCount()
  for (const pending of acc.drain()) {
    batch.push(pending)
    if (batch.length >= WRITE_BATCH) await flush()
  }
  if (batch.length > 0) await flush()
  return {
    mode,
    frequency: acc.frequency,
    rows: { accepted, rejected: acc.errors.rejectedRows },
    skus: { created, updated, rejected: errorCount() - rowErrors },
    errors: acc.errors.listed,
    errorsNotListed: acc.errors.notListed,
  }
}
