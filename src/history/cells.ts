import { MAX_ABS_VALUE, SKU_PATTERN } from '../schemas/run.js'

/** A plain decimal number: optional sign, digits, optional fraction and exponent. No hex, no Infinity. */
const DECIMAL = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/

/**
 * Parse a demand cell. The decimal separator is `.`; thousands separators are refused.
 * @returns the finite number, or why the cell is refused
 */
export function parseDemand(cell: string): { value: number } | { reason: string } {
  const text = cell.trim()
  if (text === '') return { reason: 'demand is empty' }
  if (!DECIMAL.test(text)) return { reason: `demand ${JSON.stringify(cell.slice(0, 40))} is not a number (use . as decimal point)` }
  const value = Number(text)
  if (!Number.isFinite(value) || Math.abs(value) > MAX_ABS_VALUE) {
    return { reason: `demand ${JSON.stringify(cell.slice(0, 40))} is out of range (at most 1e15 in size)` }
  }
  return { value }
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
