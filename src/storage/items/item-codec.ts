import { constants, deflateRawSync, inflateRawSync } from 'node:zlib'
import { FREQUENCIES } from '../../engine/index.js'
import { StoredValueError } from '../decode.js'
import { STRUCTURE_DICTIONARY } from './item-structure-dictionary.js'
import { servedBytes, withoutCandidates } from './item-served.js'
import type { ResultItem } from '../../runs/contract.js'

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

/**
 * A stored item, decoded and checked.
 * @throws StoredValueError when the bytes do not inflate to a result item of this SKU.
 */
export function loadItem(sku: string, stored: Buffer): ResultItem {
  let value: unknown
  try {
    value = JSON.parse(servedItemJson(sku, stored).toString('utf8'))
  } catch (err) {
    throw new StoredValueError(`result item of SKU ${sku} does not decode: ${(err as Error).message}`)
  }
  if (!isResultItem(value, sku)) throw new StoredValueError(`result item of SKU ${sku} is not a result item`)
  return value
}

// A hand check of the item's shape, as servedBytes writes it: the SKU forecast
// route decodes an item per request and CSV exports decode whole runs. Numbers
// may be null (servedBytes writes a non-finite value as null).
type Json = Record<string, unknown>
const isObject = (v: unknown): v is Json => typeof v === 'object' && v !== null && !Array.isArray(v)
const isText = (v: unknown): v is string => typeof v === 'string'
const isNumber = (v: unknown) => v === null || typeof v === 'number'
const isListOf = (v: unknown, item: (x: unknown) => boolean) => Array.isArray(v) && v.every(item)
const isInterval = (i: unknown) => isObject(i) && isNumber(i.level) && isNumber(i.low) && isNumber(i.high)
const isPoint = (p: unknown) => isObject(p) && isText(p.period) && isNumber(p.demand) && isListOf(p.intervals, isInterval)
const isWarning = (w: unknown) => isObject(w) && isText(w.code) && isText(w.message)
const isCandidate = (c: unknown) =>
  isObject(c) &&
  isText(c.model) &&
  isText(c.family) &&
  isText(c.status) &&
  (c.holdoutErrors === undefined || isObject(c.holdoutErrors)) &&
  (c.score === undefined || isNumber(c.score)) &&
  (c.reason === undefined || isText(c.reason))

function isResultItem(v: unknown, sku: string): v is ResultItem {
  if (!isObject(v) || v.sku !== sku || !(FREQUENCIES as readonly unknown[]).includes(v.frequency)) return false
  if ('failure' in v) return isObject(v.failure) && isText(v.failure.code) && isText(v.failure.message)
  const c = v.modelChoice
  return (
    isText(v.model) &&
    isText(v.family) &&
    isObject(v.params) &&
    isObject(c) &&
    isText(c.method) &&
    isText(c.rankBy) &&
    isNumber(c.holdoutPeriods) &&
    isNumber(c.holdoutOrigins) &&
    (c.members === undefined || isListOf(c.members, (m) => isObject(m) && isText(m.model) && isText(m.family))) &&
    (v.holdoutErrors === null || isObject(v.holdoutErrors)) &&
    isListOf(v.candidates, isCandidate) &&
    isListOf(v.forecast, isPoint) &&
    isText(v.intervalMethod) &&
    isListOf(v.warnings, isWarning) &&
    (v.replenishment === undefined || isObject(v.replenishment))
  )
}
