import type { LatestForecast, RunGateway } from '../runs/contract.js'
import type { PublishedRow, PublishedSource } from '../runs/published-export.js'
import type { AdjustmentService } from '../runs/adjustment-service.js'
import type { HistoryStore } from '../storage/histories/history-store.js'
import { DEFAULT_CSV_DIALECT, numberCell, REPLENISHMENT_COLUMNS, textCell } from './csv-export.js'
import { CSV_DELIMITERS, type CsvDialect } from '../schemas/csv-dialect.js'

/**
 * GET /v1/forecasts/published as text: CSV (RFC 4180, CRLF, a header row; comma
 * delimiter and dot decimal unless the dialect says otherwise, as in csv-export.ts) or NDJSON (one JSON row per line), written one
 * batch of SKUs at a time. CSV columns:
 *
 *   sku, frequency, period, demand, setDemand, changePercent, finalDemand,
 *   low<L>, high<L> (per requested level L), model, runId, producedAt,
 *   REPLENISHMENT_COLUMNS (empty for a SKU without replenishment figures)
 *
 * Text cells are neutralised against formula injection as in the results
 * CSV (csv-export.ts textCell); numbers are written as numbers.
 */

/** SKUs read per round trip. */
export const EXPORT_BATCH = 500

export function publishedCsvHeader(levels: readonly number[], dialect: CsvDialect = DEFAULT_CSV_DIALECT): string {
  const bounds = levels.flatMap((l) => [`low${l}`, `high${l}`])
  return (
    ['sku', 'frequency', 'period', 'demand', 'setDemand', 'changePercent', 'finalDemand', ...bounds, 'model', 'runId', 'producedAt', ...REPLENISHMENT_COLUMNS].join(
      CSV_DELIMITERS[dialect.delimiter],
    ) + '\r\n'
  )
}

export function publishedCsvRow(row: PublishedRow, levels: readonly number[], dialect: CsvDialect = DEFAULT_CSV_DIALECT): string {
  const num = (value: number | null | undefined) => numberCell(value, dialect)
  const a = row.adjustment
  const bounds = levels.flatMap((l) => {
    const iv = row.intervals.find((i) => i.level === l)
    return [num(iv?.low), num(iv?.high)]
  })
  const r = row.replenishment
  const replenishment = REPLENISHMENT_COLUMNS.map((c) => num(r?.[c]))
  return (
    [
      textCell(row.sku),
      row.frequency,
      textCell(row.period),
      num(row.demand),
      num(a !== null && 'setDemand' in a ? a.setDemand : null),
      num(a !== null && 'changePercent' in a ? a.changePercent : null),
      num(row.finalDemand),
      ...bounds,
      textCell(row.model),
      textCell(row.runId),
      textCell(row.producedAt),
      ...replenishment,
    ].join(CSV_DELIMITERS[dialect.delimiter]) + '\r\n'
  )
}

/** The export as text chunks, one per batch of SKUs. */
export async function* publishedText(
  rows: AsyncIterable<readonly PublishedRow[]>,
  format: { readonly kind: 'csv'; readonly levels: readonly number[]; readonly dialect?: CsvDialect } | { readonly kind: 'ndjson' },
): AsyncGenerator<string> {
  const dialect = format.kind === 'csv' ? (format.dialect ?? DEFAULT_CSV_DIALECT) : DEFAULT_CSV_DIALECT
  if (format.kind === 'csv') yield publishedCsvHeader(format.levels, dialect)
  for await (const batch of rows) {
    let chunk = ''
    for (const row of batch) chunk += format.kind === 'csv' ? publishedCsvRow(row, format.levels, dialect) : JSON.stringify(row) + '\n'
    if (chunk !== '') yield chunk
  }
}

/**
 * Where the export reads from. Without a tag: a scan of the tenant's latest
 * records, de-duplicated (HSCAN may repeat a SKU; the set of SKUs seen is the
 * only thing held for the whole export). With a tag: the SKUs carrying it, page
 * by page from the history index, in SKU order.
 */
export function publishedSource(
  deps: {
    readonly gateway: Required<Pick<RunGateway, 'scanPublished' | 'publishedOf'>>
    readonly histories: Pick<HistoryStore, 'list'> | null
    readonly adjustments: Pick<AdjustmentService, 'inForceMany'> | null
  },
  tenant: string,
  tag: string | undefined,
): PublishedSource {
  async function* scanned(): AsyncGenerator<LatestForecast[]> {
    const seen = new Set<string>()
    let cursor = '0'
    do {
      const step = await deps.gateway.scanPublished(tenant, cursor, EXPORT_BATCH)
      cursor = step.cursor
      const fresh = step.forecasts.filter((f) => !seen.has(f.item.sku))
      for (const f of fresh) seen.add(f.item.sku)
      if (fresh.length > 0) yield fresh
    } while (cursor !== '0')
  }
  async function* tagged(histories: Pick<HistoryStore, 'list'>, tag: string): AsyncGenerator<LatestForecast[]> {
    let cursor: string | undefined
    do {
      const page = await histories.list(tenant, { limit: EXPORT_BATCH, tag, ...(cursor === undefined ? {} : { cursor }) })
      const forecasts = await deps.gateway.publishedOf(tenant, page.items.map((h) => h.sku))
      const found = forecasts.filter((f): f is LatestForecast => f !== null)
      if (found.length > 0) yield found
      cursor = page.nextCursor ?? undefined
    } while (cursor !== undefined)
  }
  return {
    batches: () => (tag === undefined || deps.histories === null ? scanned() : tagged(deps.histories, tag)),
    inForce: async (skus) => (deps.adjustments === null ? skus.map(() => new Map()) : deps.adjustments.inForceMany(tenant, skus)),
  }
}
