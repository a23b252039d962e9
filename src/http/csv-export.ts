import type { ForecastItem, ResultItem, ResultPage, RunRecord } from '../runs/contract.js'
import { CSV_DELIMITERS, type CsvDialect } from '../schemas/csv-dialect.js'

/**
 * Run results as CSV (RFC 4180, CRLF line ends, a header row): one row per
 * SKU and forecast period with
 *
 *   sku, period, demand, low<L>, high<L> (per interval level L of the run),
 *   model, rankBy, holdoutError, [replenishment columns], failure
 *
 * When the run asked for replenishment figures, REPLENISHMENT_COLUMNS come
 * before `failure`: the SKU's policy (lead time, review period and lead-time
 * spread in its periods, service level, minimum order, pack size, order
 * quantity) on every row, and coverDemand, safetyStock and reorderPoint for an
 * order placed at the start of the row's period (empty where the protection
 * interval runs past the horizon).
 *
 * `holdoutError` is the chosen model's holdout error named by `rankBy` when
 * the model was chosen on a holdout (empty otherwise or where undefined). A SKU
 * the engine could not forecast gets one row with only sku and failure
 * (`code: message`).
 *
 * Spreadsheet formula injection (OWASP "CSV Injection"; common practice): a
 * text cell (sku, model, failure) starting with `=`, `+`, `-`, `@` (after any
 * leading whitespace), tab or CR is prefixed with `'`. Numeric cells are written as numbers and never changed,
 * so `-3.5` stays a negative number.
 *
 * Dialect (query `delimiter`, `decimalSeparator`): the field delimiter is a
 * comma, semicolon or tab, and numbers may use a decimal comma (`1,5`; with a
 * semicolon or tab delimiter only). Numbers never carry thousands separators.
 */

/** Comma-delimited, decimal point: RFC 4180 as most tools read it. */
export const DEFAULT_CSV_DIALECT: CsvDialect = { delimiter: 'comma', decimalSeparator: 'point' }

/** Results read per round trip while streaming. */
export const CSV_PAGE_SIZE = 500

/** True when the Accept header ranks text/csv above (or equal to) an explicit application/json. */
export function prefersCsv(accept: string | undefined): boolean {
  if (!accept) return false
  let csv = 0
  let json = 0
  for (const part of accept.split(',')) {
    const [type, ...params] = part.trim().toLowerCase().split(';')
    const qParam = params.map((p) => p.trim()).find((p) => p.startsWith('q='))
    const q = qParam === undefined ? 1 : Number(qParam.slice(2))
    const weight = Number.isFinite(q) ? q : 0
    if (type === 'text/csv') csv = Math.max(csv, weight)
    if (type === 'application/json') json = Math.max(json, weight)
  }
  return csv > 0 && csv >= json
}

/**
 * Tab or CR first, or a formula sign after any leading whitespace (spreadsheets
 * skip blanks, no-break spaces included, before looking for `=`).
 */
const FORMULA_START = /^(?:[\t\r]|\s*[=+\-@])/

/**
 * A text cell: neutralised against formula injection, quoted when it holds a
 * quote, a line break, a comma or a semicolon (any delimiter, so a cell reads
 * the same whichever one a spreadsheet guesses) or a tab.
 */
export function textCell(value: string): string {
  const safe = FORMULA_START.test(value) ? `'${value}` : value
  return /[",;\t\r\n]/.test(safe) ? `"${safe.replace(/"/g, '""')}"` : safe
}

/** A numeric cell, with a decimal comma if asked; empty for null or a non-finite value. */
export function numberCell(value: number | null | undefined, dialect: CsvDialect = DEFAULT_CSV_DIALECT): string {
  if (typeof value !== 'number' || !Number.isFinite(value)) return ''
  const text = String(value)
  return dialect.decimalSeparator === 'comma' ? text.replace('.', ',') : text
}

/** The interval levels of a run, ascending (the columns low<L>, high<L>). */
function levelsOf(run: RunRecord): number[] {
  return [...new Set(run.settings.intervalLevels)].sort((a, b) => a - b)
}

/** The replenishment columns, in order (present when the run asked for the figures). */
export const REPLENISHMENT_COLUMNS = [
  'leadTimePeriods',
  'reviewPeriods',
  'leadTimeSdPeriods',
  'serviceLevel',
  'coverDemand',
  'safetyStock',
  'reorderPoint',
  'orderQuantity',
  'minimumOrder',
  'packSize',
] as const

function replenishmentColumns(run: RunRecord): readonly string[] {
  return run.settings.replenishment ? REPLENISHMENT_COLUMNS : []
}

export function csvHeader(run: RunRecord, dialect: CsvDialect = DEFAULT_CSV_DIALECT): string {
  const bounds = levelsOf(run).flatMap((l) => [`low${l}`, `high${l}`])
  const names = ['sku', 'period', 'demand', ...bounds, 'model', 'rankBy', 'holdoutError', ...replenishmentColumns(run), 'failure']
  return names.join(CSV_DELIMITERS[dialect.delimiter]) + '\r\n'
}

/** The replenishment cells of one row: the SKU's policy, and the figures for an order placed in `period`. */
function replenishmentCells(item: ForecastItem, period: string, run: RunRecord, dialect: CsvDialect): string[] {
  if (!run.settings.replenishment) return []
  const r = item.replenishment
  if (!r) return REPLENISHMENT_COLUMNS.map(() => '')
  const at = r.periods.find((p) => p.period === period)
  const cells: Record<(typeof REPLENISHMENT_COLUMNS)[number], number | null | undefined> = {
    leadTimePeriods: r.leadTimePeriods,
    reviewPeriods: r.reviewPeriods,
    leadTimeSdPeriods: r.leadTimeSdPeriods,
    serviceLevel: r.serviceLevel,
    coverDemand: at?.coverDemand,
    safetyStock: at?.safetyStock,
    reorderPoint: at?.reorderPoint,
    orderQuantity: r.orderQuantity,
    minimumOrder: r.minimumOrder,
    packSize: r.packSize,
  }
  return REPLENISHMENT_COLUMNS.map((c) => numberCell(cells[c], dialect))
}

/** The CSV rows of one result item. */
export function itemRows(item: ResultItem, run: RunRecord, dialect: CsvDialect = DEFAULT_CSV_DIALECT): string {
  const sep = CSV_DELIMITERS[dialect.delimiter]
  const num = (value: number | null | undefined) => numberCell(value, dialect)
  const levels = levelsOf(run)
  const rankBy = run.settings.rankBy
  if ('failure' in item) {
    const empty = new Array(2 + levels.length * 2 + 3 + replenishmentColumns(run).length).fill('')
    return [textCell(item.sku), ...empty, textCell(`${item.failure.code}: ${item.failure.message}`)].join(sep) + '\r\n'
  }
  const holdout = item.modelChoice.method === 'holdout' ? num(item.holdoutErrors?.[rankBy]) : ''
  let out = ''
  for (const point of item.forecast) {
    const bounds = levels.flatMap((l) => {
      const iv = point.intervals.find((i) => i.level === l)
      return [num(iv?.low), num(iv?.high)]
    })
    out +=
      [
        textCell(item.sku),
        textCell(point.period),
        num(point.demand),
        ...bounds,
        textCell(item.model),
        rankBy,
        holdout,
        ...replenishmentCells(item, point.period, run, dialect),
        '',
      ].join(sep) +
      '\r\n'
  }
  return out
}

/**
 * The whole run as CSV text chunks, one page of results at a time (never the
 * whole run in memory). `page(cursor)` reads the next page.
 */
export async function* runResultsCsv(
  run: RunRecord,
  page: (cursor: string | undefined) => Promise<ResultPage | null>,
  dialect: CsvDialect = DEFAULT_CSV_DIALECT,
): AsyncGenerator<string> {
  yield csvHeader(run, dialect)
  let cursor: string | undefined
  for (;;) {
    const p = await page(cursor)
    if (p === null) return
    let chunk = ''
    for (const item of p.items) chunk += itemRows(item, run, dialect)
    if (chunk !== '') yield chunk
    if (p.nextCursor === null) return
    cursor = p.nextCursor
  }
}
