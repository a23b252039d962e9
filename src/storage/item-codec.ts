import { constants, deflateRawSync, inflateRawSync } from 'node:zlib'
import { STRUCTURE_DICTIONARY } from './item-structure-dictionary.js'
import { servedBytes, withoutCandidates } from './item-served.js'
import type { ResultItem } from './types.js'

export { round } from './item-common.js'
export { roundedJson, servedBody, withoutCandidates } from './item-served.js'

/**
 * The bytes kept in Redis per result item: the item's served JSON without its
 * sku (item-served.ts), raw DEFLATE (RFC 1951) with the preset dictionary
 * STRUCTURE_DICTIONARY (the served structure without numbers), through
 * zlib's public one-shot calls.
 *
 * Level 5 and Z_FILTERED: items are short and mostly digits, and these
 * settings gave the smallest items for their time (bench/RESULTS.md, "Stored
 * result items"). A strategy or level only changes which valid DEFLATE stream
 * is written; the reader needs only the dictionary.
 */
export const ITEM_DEFLATE_OPTIONS = { dictionary: STRUCTURE_DICTIONARY, level: 5, strategy: constants.Z_FILTERED } as const

const INFLATE_OPTIONS = { dictionary: STRUCTURE_DICTIONARY } as const

export function storeItem(item: ResultItem): Buffer {
  return storeServed(servedBytes(item))
}

/** The stored bytes of an item's served JSON (servedBytes(item)): storeItem in two steps. */
export function storeServed(served: Buffer): Buffer {
  return deflateRawSync(served, ITEM_DEFLATE_OPTIONS)
}

/** The served JSON of a stored item without its sku: `{"model":...}` or `{"error":...}`. */
export function servedOf(stored: Buffer): Buffer {
  return inflateRawSync(stored, INFLATE_OPTIONS)
}

/** Which fields a served item carries: all, or all but `candidates` (`?view=compact`). */
export type ItemView = 'full' | 'compact'

/**
 * The served JSON of a stored item, sku first, as UTF-8 bytes in two parts
 * (equal to JSON.stringify(loadItem(sku, stored)) when concatenated, for the
 * full view): a results page is written from these without parsing any item.
 */
export function servedItemParts(sku: string, stored: Buffer, view: ItemView = 'full'): [Buffer, Buffer] {
  const body = view === 'compact' ? withoutCandidates(servedOf(stored)) : servedOf(stored)
  // The body's '{' becomes the comma after the sku.
  body[0] = 0x2c
  return [Buffer.from(`{"sku":${JSON.stringify(sku)}`, 'utf8'), body]
}

/** servedItemParts as one buffer. */
export function servedItemJson(sku: string, stored: Buffer): Buffer {
  return Buffer.concat(servedItemParts(sku, stored))
}

export function loadItem(sku: string, stored: Buffer): ResultItem {
  return JSON.parse(servedItemJson(sku, stored).toString('utf8')) as ResultItem
}
