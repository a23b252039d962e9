import { inflateRawSync } from 'node:zlib'
import { deflateWithHeader, inflateItem, type ItemDictionary } from './item-deflate.js'
import { decodeItem } from './item-compact.js'
import { servedBytes } from './item-served.js'
import type { ResultItem } from './types.js'

export { decodeItem, encodeItem } from './item-compact.js'
export { round } from './item-common.js'
export { roundedJson, servedBody } from './item-served.js'

/**
 * Bytes kept in Redis per item: a one-byte header, then the item compressed
 * with raw DEFLATE (RFC 1951).
 *   0x03: servedBody, compressed with the preset dictionary STRUCTURE_DICTIONARY
 *         (item-structure-dictionary.ts: the served structure without numbers,
 *         4.5 KB; items as small as 0x02's and cheaper to write, since every
 *         item pays for hashing the dictionary).
 *   0x02: servedBody, compressed with the preset dictionary ITEM_DICTIONARY
 *         (item-dictionary.ts, 12 KB; about 40% smaller than without one;
 *         written until format 0x03).
 *   0x01: encodeItem's compact JSON, no dictionary (written until format 0x02).
 *   `[`:  encodeItem's compact JSON, not compressed.
 */
const DEFLATED = 0x01
const SERVED = 0x02
const STRUCTURE = 0x03

/** The dictionary of a stored item in a served-JSON format, or null for the older formats. */
function servedDictionary(stored: Buffer): ItemDictionary | null {
  return stored[0] === STRUCTURE ? 'structure' : stored[0] === SERVED ? 'served' : null
}

export function storeItem(item: ResultItem): Buffer {
  return storeServed(servedBytes(item))
}

/**
 * storeItem in two steps: `servedBytes(item)` (item-served.ts; a view of a kept
 * buffer, so copy it if it must outlive the next call), then this, which gives
 * the same stored bytes as storeItem(item).
 */
export function storeServed(served: Buffer): Buffer {
  return deflateWithHeader(STRUCTURE, served, 'structure')
}

/**
 * The served JSON of a stored item, sku first, as UTF-8 bytes in two parts
 * (equal to JSON.stringify(loadItem(sku, stored)) when concatenated).
 */
export function servedItemParts(sku: string, stored: Buffer): [Buffer, Buffer] {
  const dictionary = servedDictionary(stored)
  if (dictionary === null) return [Buffer.from(JSON.stringify(loadItem(sku, stored)), 'utf8'), EMPTY]
  const body = inflateItem(stored.subarray(1), dictionary)
  // The body's '{' becomes the comma after the sku.
  body[0] = 0x2c
  return [Buffer.from(`{"sku":${JSON.stringify(sku)}`, 'utf8'), body]
}

const EMPTY = Buffer.alloc(0)

/** servedItemParts as one buffer. */
export function servedItemJson(sku: string, stored: Buffer): Buffer {
  return Buffer.concat(servedItemParts(sku, stored))
}

export function loadItem(sku: string, stored: Buffer): ResultItem {
  const dictionary = servedDictionary(stored)
  if (dictionary !== null) return JSON.parse(`{"sku":${JSON.stringify(sku)},${inflateItem(stored.subarray(1), dictionary).toString('utf8', 1)}`) as ResultItem
  const json = stored[0] === DEFLATED ? inflateRawSync(stored.subarray(1)).toString('utf8') : stored.toString('utf8')
  return decodeItem(sku, json)
}
