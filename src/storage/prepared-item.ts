import { storeItem, storeServed } from './item-codec.js'
import { servedBytes } from './item-served.js'
import { encodePoints } from './latest-record.js'
import type { ResultItem } from './types.js'

/**
 * A result item as the run store commits it: its stored bytes (item-codec.ts)
 * and, for a forecast, the points of its latest-forecast record
 * (latest-record.ts). A chunk processor prepares each item as soon as it is
 * fitted, so a chunk keeps under a kilobyte per series alive until its
 * commit instead of every item's objects: objects that survive that long are
 * promoted to the old generation and cost a full garbage collection
 * (bench:e2e, processor notes in README).
 */
export interface PreparedItem {
  readonly sku: string
  readonly stored: Buffer
  /** encodePoints of the forecast; null for an error item (it never becomes a latest forecast). */
  readonly points: string | null
}

export function prepareItem(item: ResultItem): PreparedItem {
  return { sku: item.sku, stored: storeItem(item), points: pointsOf(item) }
}

/** The latest-forecast points of an item; null for an error item. */
function pointsOf(item: ResultItem): string | null {
  return 'error' in item ? null : encodePoints(item.forecast)
}

export function prepareItems(items: readonly ResultItem[]): PreparedItem[] {
  const preparer = new ItemPreparer()
  for (const item of items) preparer.add(item)
  return preparer.finish()
}

/** Served text of items waiting for DEFLATE, back to back (about 30 items of ~4 KB). */
const ARENA_BYTES = 128 * 1024

/**
 * Prepares items one at a time as prepareItem does, with the same bytes, but
 * compresses them in batches: each item's served text is written when it is
 * added (so the result objects can go at once) and copied into an arena, and
 * the arena is deflated when full and by finish(). DEFLATE's state (window,
 * hash tables and the preset dictionary, a few hundred KB) then stays in the
 * CPU cache across a batch instead of being evicted by the engine between
 * items.
 */
export class ItemPreparer {
  private readonly arena = Buffer.allocUnsafe(ARENA_BYTES)
  private used = 0
  /** Items waiting for DEFLATE: their sku, points and end offset in the arena. */
  private readonly waiting: { sku: string; points: string | null; end: number }[] = []
  private readonly prepared: PreparedItem[] = []

  add(item: ResultItem): void {
    const points = pointsOf(item)
    const served = servedBytes(item)
    if (this.used + served.length > this.arena.length) this.flush()
    if (served.length > this.arena.length) {
      this.prepared.push({ sku: item.sku, stored: storeServed(served), points })
      return
    }
    served.copy(this.arena, this.used)
    this.used += served.length
    this.waiting.push({ sku: item.sku, points, end: this.used })
  }

  /** Every added item, prepared, in the order added. */
  finish(): PreparedItem[] {
    this.flush()
    return this.prepared
  }

  private flush(): void {
    let start = 0
    for (const w of this.waiting) {
      this.prepared.push({ sku: w.sku, stored: storeServed(this.arena.subarray(start, w.end)), points: w.points })
      start = w.end
    }
    this.waiting.length = 0
    this.used = 0
  }
}
