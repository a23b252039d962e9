import type { Readable } from 'node:stream'
import { CsvError, parse } from 'csv-parse'
import { pauseBetweenStretches, type UploadSink } from './staged-upload.js'
import { bucketOf } from './buckets.js'
import { parseDemand, parseSku, parseTagsCell, type DecimalSeparator } from './cells.js'

export interface CsvLayout {
  /** One character: `,`, `;` or a tab. */
  readonly delimiter: string
  /** Header names of the three columns (matched ignoring case and surrounding blanks). */
  readonly skuColumn: string
  readonly periodColumn: string
  readonly demandColumn: string
  /** `comma`: demand cells are written `1,5` (the delimiter must then be `;` or a tab). Default `point`. */
  readonly decimalSeparator?: DecimalSeparator
  /** Header name of an optional column of tags (`category:garden|site:north`); absent: no tags column. */
  readonly tagsColumn?: string
}

/** The upload as a whole cannot be read (e.g. a required column is missing). */
export class UploadFormatError extends Error {
  override readonly name = 'UploadFormatError'
  constructor(
    message: string,
    /** The query parameter or part at fault, e.g. `skuColumn`. */
    readonly field: string,
  ) {
    super(message)
  }
}

/** CSV records read between two pauses (a few milliseconds of work). */
const RECORDS_PER_TURN = 2000

/** Longest accepted CSV record in characters: guards against a wrong delimiter swallowing a file. */
const MAX_RECORD_CHARS = 64 * 1024

/**
 * Read a long-layout CSV (a header row, then one `sku, period, demand` row
 * per line; other header columns are ignored) into the accumulator, incrementally:
 * records are parsed and aggregated as the bytes arrive (RFC 4180 quoting by csv-parse).
 * Each bad row is recorded with its line number, column and reason; good rows are kept.
 * A row with more cells than the header is refused: an unquoted `1,000` would otherwise
 * lose its thousands. Demand uses the layout's decimal separator; a tags column, when
 * named, gives each row's tags (separated by `|`).
 * A record the parser cannot delimit (over-long, or broken quoting) refuses the whole
 * upload: past such a record csv-parse cannot tell where the next one starts, and
 * skipping would drop the following rows without counting them.
 * @throws UploadFormatError when the header lacks a required column, the file is empty
 *   or a record cannot be delimited
 */
export async function readCsvUpload(source: Readable, layout: CsvLayout, acc: UploadSink): Promise<void> {
  const parser = parse({
    delimiter: layout.delimiter,
    bom: true,
    relax_column_count: true,
    skip_empty_lines: true,
    max_record_size: MAX_RECORD_CHARS,
    info: true,
  })
  source.on('error', (err) => parser.destroy(err))
  source.pipe(parser)
  try {
    await readRecords(parser as AsyncIterable<{ record: string[]; info: { lines: number } }>, layout, acc)
  } catch (err) {
    throw unreadable(err)
  }
}

async function readRecords(
  records: AsyncIterable<{ record: string[]; info: { lines: number } }>,
  layout: CsvLayout,
  acc: UploadSink,
): Promise<void> {
  let columns: { sku: number; period: number; demand: number; tags: number } | null = null
  let names: readonly string[] = []
  let read = 0
  for await (const entry of records) {
    if (++read % RECORDS_PER_TURN === 0) await pauseBetweenStretches(acc)
    const { record, info } = entry
    const line = info.lines
    if (columns === null) {
      names = record.map((c) => c.trim())
      columns = {
        sku: findColumn(names, layout.skuColumn, 'skuColumn'),
        period: findColumn(names, layout.periodColumn, 'periodColumn'),
        demand: findColumn(names, layout.demandColumn, 'demandColumn'),
        tags: layout.tagsColumn === undefined ? -1 : findColumn(names, layout.tagsColumn, 'tagsColumn'),
      }
      continue
    }
    if (record.length > names.length) {
      acc.errors.add({
        line,
        reason: `the row has ${record.length} fields but the header has ${names.length} (a thousands separator, or a delimiter in an unquoted cell?)`,
      })
      continue
    }
    const need = Math.max(columns.sku, columns.period, columns.demand)
    if (record.length <= need) {
      acc.errors.add({ line, column: names[need], reason: `the row has ${record.length} fields; column ${names[need]} is missing` })
      continue
    }
    const sku = parseSku(record[columns.sku]!)
    if ('reason' in sku) {
      acc.errors.add({ line, column: names[columns.sku], reason: sku.reason })
      continue
    }
    const bucket = bucketOf(record[columns.period]!, acc.frequency)
    if ('reason' in bucket) {
      acc.errors.add({ line, column: names[columns.period], sku: sku.sku, reason: bucket.reason })
      continue
    }
    const demand = parseDemand(record[columns.demand]!, layout.decimalSeparator)
    if ('reason' in demand) {
      acc.errors.add({ line, column: names[columns.demand], sku: sku.sku, reason: demand.reason })
      continue
    }
    // A short row that stops before the tags column carries no tags.
    const tags = columns.tags < 0 ? { tags: [] } : parseTagsCell(record[columns.tags] ?? '')
    if ('reason' in tags) {
      acc.errors.add({ line, column: names[columns.tags], sku: sku.sku, reason: tags.reason })
      continue
    }
    acc.addRow(sku.sku, bucket.ordinal, demand.value, { line }, bucket.dated, tags.tags)
  }
  if (columns === null) throw new UploadFormatError('the CSV upload is empty: expected a header row', 'body')
}

/** A csv-parse error (it carries the line where the record broke) as a refusal of the upload. */
function unreadable(err: unknown): unknown {
  if (!(err instanceof CsvError)) return err
  const lines = (err as { lines?: unknown }).lines
  const at = typeof lines === 'number' ? ` near line ${lines}` : ''
  const why =
    err.code === 'CSV_MAX_RECORD_SIZE'
      ? `a record is longer than ${MAX_RECORD_CHARS} characters (wrong delimiter, or an unclosed quote?)`
      : `the CSV cannot be read (${err.message})`
  return new UploadFormatError(`${why}${at}; nothing was stored`, 'body')
}

function findColumn(names: readonly string[], wanted: string, param: string): number {
  const i = names.findIndex((n) => n.toLowerCase() === wanted.trim().toLowerCase())
  if (i < 0) {
    throw new UploadFormatError(
      `the CSV header has no column ${JSON.stringify(wanted)} (found ${names.map((n) => JSON.stringify(n)).join(', ')}); name it with ${param}`,
      param,
    )
  }
  return i
}
