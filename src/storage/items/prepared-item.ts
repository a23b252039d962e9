import { storeItem } from './item-codec.js'
import { encodePoints } from './latest-record.js'
import type { ResultItem } from '../../runs/contract.js'
import { summariseItem } from '../../runs/sku-summary.js'
import { summaryTail } from '../skus/summary-record.js'

/**
 * A result item as the run store commits it: its stored bytes (item-codec.ts)
 * and, for a forecast, the points of its latest-forecast record
 * (latest-record.ts). A chunk processor prepares each item as soon as it is
 * fitted, so until the commit a chunk keeps only these bytes alive, not every
 * item's objects: objects that live that long are promoted to V8's old
 * generation and cost full garbage collections.
 */
export interface PreparedItem {
  readonly sku: string
  readonly stored: Buffer
  /** encodePoints of the forecast; null for a failed item (it never becomes a latest forecast). */
  readonly points: string | null
  /** The SKU's summary for the SKU list (summary-record.ts summaryTail), written when the run publishes. */
  readonly summary: string
}

export function prepareItem(item: ResultItem): PreparedItem {
  return {
    sku: item.sku,
    stored: storeItem(item),
    points: 'failure' in item ? null : encodePoints(item.forecast),
    summary: summaryTail(summariseItem(item)),
  }
}

export function prepareItems(items: readonly ResultItem[]): PreparedItem[] {
  return items.map(prepareItem)
}
