import { z } from 'zod'
import { ProblemError } from '../errors.js'

/**
 * CSV dialect query parameters, the same for uploads (`POST /v1/history`) and
 * the results export (`GET /v1/runs/{runId}/results` as text/csv): the field
 * delimiter and the decimal separator of numbers.
 */

/** The delimiter named by `delimiter`. */
export const CSV_DELIMITERS = { comma: ',', semicolon: ';', tab: '\t' } as const

export const CsvDelimiter = z.enum(['comma', 'semicolon', 'tab']).default('comma').describe('CSV field separator')

export const DecimalSeparator = z
  .enum(['point', 'comma'])
  .default('point')
  .describe('How CSV numbers write their fraction: point (1.5) or comma (1,5; needs delimiter semicolon or tab). Thousands separators are never used')

export const CsvDialectQuery = z.object({ delimiter: CsvDelimiter, decimalSeparator: DecimalSeparator })
export type CsvDialect = z.infer<typeof CsvDialectQuery>

/**
 * A comma cannot separate both fields and decimals: `1,5` would read as two cells.
 * @throws ProblemError 400 naming decimalSeparator
 */
export function checkCsvDialect(dialect: CsvDialect): void {
  if (dialect.delimiter === 'comma' && dialect.decimalSeparator === 'comma') {
    const message = 'a decimal comma needs delimiter=semicolon or delimiter=tab'
    throw new ProblemError('validation-failed', `decimalSeparator: ${message}`, [{ path: 'decimalSeparator', message }])
  }
}
