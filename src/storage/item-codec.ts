import { inflateRawSync } from 'node:zlib'
import { deflateWithHeader, inflateItem } from './item-deflate.js'
import { decodeItem } from './item-compact.js'
import { servedBytes } from './item-served.js'
import type { ResultItem } from './types.js'

export { decodeItem, encodeItem } from './item-compact.js'
export { round } from './item-common.js'
export { roundedJson, servedBody } from './item-served.js'

/**
 * Bytes kept in Redis per item: a one-byte header, then the item compressed
 * with raw DEFLATE (RFC 1951).
 *   0x02: servedBody, compressed with the preset dictionary ITEM_DICTIONARY
 *         (item-dictionary.ts; about 40% smaller than without it).
 *   0x01: encodeItem's compact JSON, no dictionary (written until format 0x02).
 *   `[`:  encodeItem's compact JSON, not compressed.
 */
const DEFLATED = 0x01
const SERVED = 0x02

export function storeItem(item: ResultItem): Buffer {
  return deflateWithHeader(SERVED, servedBytes(item))
}

/**
 * storeItem in two steps: `servedBytes(item)` (item-served.ts; a view of a kept
 * buffer, so copy it if it must outlive the next call), then this, which gives
 * the same stored bytes as storeItem(item).
 */
export function storeServed(served: Buffer): Buffer {
  return deflateWithHeader(SERVED, served)
}

/**
 * The served JSON of a stored item, sku first, as UTF-8 bytes in two parts
 * (equal to JSON.stringify(loadItem(sku, stored)) when concatenated).
 */
export function servedItemParts(sku: string, stored: Buffer): [Buffer, Buffer] {
  if (stored[0] !== SERVED) return [Buffer.from(JSON.stringify(loadItem(sku, stored)), 'utf8'), EMPTY]
  const body = inflateItem(stored.subarray(1))
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
  if (stored[0] === SERVED) return JSON.parse(`{"sku":${JSON.stringify(sku)},${inflateItem(stored.subarray(1)).toString('utf8', 1)}`) as ResultItem
  const json = stored[0] === DEFLATED ? inflateRawSync(stored.subarray(1)).toString('utf8') : stored.toString('utf8')
  return decodeItem(sku, json)
}
