import { MAX_ABS_VALUE, SKU_PATTERN } from '../schemas/run.js'
import { normaliseTags } from './tags.js'

/** A plain decimal number: optional sign, digits, optional fraction and exponent. No hex, no Infinity. */
const DECIMAL = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/
/** The same with a decimal comma (`1,5`). */
const DECIMAL_COMMA = /^[+-]?(?:\d+,?\d*|,\d+)(?:[eE][+-]?\d+)?$/

/** How a CSV writes the fraction of a number: `1.5` (point) or `1,5` (comma). */
export type DecimalSeparator = 'point' | 'comma'

/**
 * Parse a demand cell. The decimal separator is `.` unless `decimal` is
 * `comma`; thousands separators are refused either way (with a decimal comma,
 * a `.` is refused: `1.000` may mean one thousand).
 * @returns the finite number, or why the cell is refused
 */
export function parseDemand(cell: string, decimal: DecimalSeparator = 'point'): { value: number } | { reason: string } {
  const text = cell.trim()
  if (text === '') return { reason: 'demand is empty' }
  const comma = decimal === 'comma'
  if (!(comma ? DECIMAL_COMMA : DECIMAL).test(text)) {
    const hint = comma ? 'use , as decimal comma and no thousands separator' : 'use . as decimal point'
    return { reason: `demand ${JSON.stringify(cell.slice(0, 40))} is not a number (${hint})` }
  }
  const value = Number(comma ? text.replace(',', '.') : text)
  if (!Number.isFinite(value) || Math.abs(value) > MAX_ABS_VALUE) {
    return { reason: `demand ${JSON.stringify(cell.slice(0, 40))} is out of range (at most 1e15 in size)` }
  }
  return { value }
}

/** Separates the tags in one CSV cell (`category:garden|site:north`): never a delimiter, never part of a tag. */
export const TAG_SEPARATOR = '|'

/**
 * Parse a tags cell: tags separated by TAG_SEPARATOR, blanks around each
 * trimmed, empty parts skipped. Each tag follows the rule of JSON uploads.
 * @returns the tags (empty for an empty cell), or why the cell is refused
 */
export function parseTagsCell(cell: string): { tags: string[] } | { reason: string } {
  const parts = cell.split(TAG_SEPARATOR).map((t) => t.trim()).filter((t) => t !== '')
  return normaliseTags(parts)
}

/** Same rule as the Sku schema: 1-200 characters, no control characters, well-formed Unicode. Surrounding blanks are trimmed. */
export function parseSku(cell: string): { sku: string } | { reason: string } {
  const sku = cell.trim()
  if (sku === '') return { reason: 'SKU is empty' }
  if (sku.length > 200) return { reason: 'SKU is longer than 200 characters' }
  if (/[\u0000-\u001f\u007f]/.test(sku)) return { reason: 'SKU contains control characters' }
  if (!SKU_PATTERN.test(sku)) return { reason: 'SKU contains a lone UTF-16 surrogate (not well-formed Unicode)' }
  return { sku }
}
