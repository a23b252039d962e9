import { StringDecoder } from 'node:string_decoder'
import type { Readable } from 'node:stream'
import { pauseBetweenStretches, type UploadSink } from './staged-upload.js'
import { bucketOf } from './buckets.js'
import { parseDemand, parseSku } from './cells.js'
import { parseUploadSeries } from './series-item.js'
import { UploadFormatError } from './csv-reader.js'
import { normaliseTags } from './tags.js'

/** The fields of a row line; `tags` optional. */
const ROW_FIELDS = new Set(['sku', 'period', 'demand', 'tags'])

/** Longest accepted NDJSON line (a series of 10,000 values fits easily). */
const MAX_LINE_CHARS = 4 * 1024 * 1024

/**
 * Read NDJSON (one JSON object per line) into the accumulator, line by line as
 * bytes arrive. A line is either a whole series `{ sku, frequency?, firstPeriod,
 * demand, tags? }` or one row `{ sku, period, demand, tags? }` (period as in CSV:
 * a date or a period label; a SKU's tags become all the tags of its rows). Blank lines are skipped; bad lines are recorded.
 * @throws UploadFormatError on a line longer than 4 MiB
 */
export async function readNdjsonUpload(source: Readable, acc: UploadSink): Promise<void> {
  const decoder = new StringDecoder('utf8')
  let pending = ''
  let line = 0
  for await (const chunk of source) {
    pending += typeof chunk === 'string' ? chunk : decoder.write(chunk as Buffer)
    let nl: number
    while ((nl = pending.indexOf('\n')) >= 0) {
      handleLine(pending.slice(0, nl), ++line, acc)
      pending = pending.slice(nl + 1)
    }
    await pauseBetweenStretches(acc)
    if (pending.length > MAX_LINE_CHARS) throw new UploadFormatError(`line ${line + 1} is longer than ${MAX_LINE_CHARS} characters`, 'body')
  }
  pending += decoder.end()
  if (pending.length > 0) handleLine(pending, line + 1, acc)
}

function handleLine(raw: string, line: number, acc: UploadSink): void {
  const text = raw.endsWith('\r') ? raw.slice(0, -1) : raw
  if (text.trim() === '') return
  let value: unknown
  try {
    value = JSON.parse(text)
  } catch {
    acc.errors.add({ line, reason: 'the line is not valid JSON' })
    return
  }
  if (typeof value !== 'object' || value === null || Array.isArray(value)) {
    acc.errors.add({ line, reason: 'expected a JSON object' })
    return
  }
  if (Array.isArray((value as { demand?: unknown }).demand)) {
    const s = parseUploadSeries(value, acc.frequency)
    if ('reason' in s) acc.errors.add({ line, ...s })
    else acc.addSeries(s.sku, s.incoming, { line })
    return
  }
  const row = value as { sku?: unknown; period?: unknown; demand?: unknown; tags?: unknown }
  for (const key of Object.keys(row)) {
    if (!ROW_FIELDS.has(key)) return acc.errors.add({ line, column: key, reason: `unknown field ${JSON.stringify(key)}; a row has sku, period, demand and tags` })
  }
  if (typeof row.sku !== 'string') return acc.errors.add({ line, column: 'sku', reason: 'sku must be a string' })
  const sku = parseSku(row.sku)
  if ('reason' in sku) return acc.errors.add({ line, column: 'sku', reason: sku.reason })
  if (typeof row.period !== 'string') return acc.errors.add({ line, column: 'period', sku: sku.sku, reason: 'period must be a string' })
  const bucket = bucketOf(row.period, acc.frequency)
  if ('reason' in bucket) return acc.errors.add({ line, column: 'period', sku: sku.sku, reason: bucket.reason })
  // Numbers take the same checks as CSV cells (range included).
  const demand =
    typeof row.demand === 'number' || typeof row.demand === 'string'
      ? parseDemand(String(row.demand))
      : { reason: 'demand must be a number' }
  if ('reason' in demand) return acc.errors.add({ line, column: 'demand', sku: sku.sku, reason: demand.reason })
  let tags: string[] = []
  if (row.tags !== undefined) {
    const t = Array.isArray(row.tags) ? normaliseTags(row.tags) : { reason: 'tags must be an array of strings' }
    if ('reason' in t) return acc.errors.add({ line, column: 'tags', sku: sku.sku, reason: t.reason })
    tags = t.tags
  }
  acc.addRow(sku.sku, bucket.ordinal, demand.value, { line }, bucket.dated, tags)
}
