/**
 * Enough CSV reading for the upload preview: the header and the first rows, with
 * quoted fields ("a,b", "say ""hi"""). The server reads the whole file itself.
 */

export type Delimiter = 'comma' | 'semicolon' | 'tab'
export const DELIMITER_CHARS: Record<Delimiter, string> = { comma: ',', semicolon: ';', tab: '\t' }

/** The delimiter that splits the header line into the most fields. */
export function guessDelimiter(text: string): Delimiter {
  const firstLine = text.split(/\r?\n/, 1)[0] ?? ''
  let best: Delimiter = 'comma'
  let bestCount = 0
  for (const d of ['comma', 'semicolon', 'tab'] as const) {
    const count = parseRows(firstLine, DELIMITER_CHARS[d], 1)[0]?.length ?? 0
    if (count > bestCount) {
      best = d
      bestCount = count
    }
  }
  return best
}

/** The first `maxRows` records of `text`. */
export function parseRows(text: string, delimiter: string, maxRows: number): string[][] {
  const rows: string[][] = []
  let row: string[] = []
  let field = ''
  let quoted = false
  let i = text.charCodeAt(0) === 0xfeff ? 1 : 0
  for (; i < text.length && rows.length < maxRows; i++) {
    const c = text[i]!
    if (quoted) {
      if (c === '"' && text[i + 1] === '"') {
        field += '"'
        i++
      } else if (c === '"') quoted = false
      else field += c
    } else if (c === '"' && field === '') quoted = true
    else if (c === delimiter) {
      row.push(field)
      field = ''
    } else if (c === '\n' || c === '\r') {
      if (c === '\r' && text[i + 1] === '\n') i++
      row.push(field)
      field = ''
      if (row.length > 1 || row[0] !== '') rows.push(row)
      row = []
    } else field += c
  }
  if (rows.length < maxRows && (field !== '' || row.length > 0)) {
    row.push(field)
    rows.push(row)
  }
  return rows
}

/** The header that best matches a role, by common names; -1 when none does. */
export function guessColumn(header: readonly string[], names: readonly string[]): number {
  const lower = header.map((h) => h.trim().toLowerCase())
  for (const name of names) {
    const i = lower.indexOf(name)
    if (i >= 0) return i
  }
  // Then a header that contains one of the names as a word: units_sold, order date.
  for (const name of names) {
    const i = lower.findIndex((h) => h.split(/[^a-z0-9]+/).includes(name))
    if (i >= 0) return i
  }
  return -1
}

export type DecimalSeparator = 'point' | 'comma'

/**
 * Comma when the delimiter is not a comma and some cell of the rows reads as a
 * number with a decimal comma (`12,5`) while none has a decimal point; point otherwise.
 */
export function guessDecimalSeparator(rows: readonly (readonly string[])[], delimiter: Delimiter): DecimalSeparator {
  if (delimiter === 'comma') return 'point'
  const cells = rows.flat().map((c) => c.trim())
  const comma = cells.some((c) => /^[+-]?\d+,\d+$/.test(c))
  const point = cells.some((c) => /^[+-]?\d+\.\d+$/.test(c))
  return comma && !point ? 'comma' : 'point'
}
