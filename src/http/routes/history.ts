import { Transform, type Readable } from 'node:stream'
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { z } from 'zod'
import { HistoryAccumulator } from '../../history/accumulator.js'
import { STAGED_PARTS, StagedUpload } from '../../history/staged-upload.js'
import { readCsvUpload, UploadFormatError } from '../../history/csv-reader.js'
import { commitUpload, defaultMode } from '../../history/ingest.js'
import { withSkuQuota } from '../../history/quota.js'
import { DEFAULT_QUOTA_SKUS_PER_TENANT, DEFAULT_UPLOAD_SPILL_BYTES } from '../../config.js'
import { bucketOf } from '../../history/buckets.js'
import { formatPeriod, parsePeriod, type Frequency } from '../../engine/index.js'
import { closePeriod } from '../../history/close-period.js'
import { requireErp } from '../plugins/erp.js'
import { readNdjsonUpload } from '../../history/ndjson-reader.js'
import { parseUploadSeries, UploadSeries } from '../../history/series-item.js'
import { MAX_FIELD_ERRORS } from '../problem-mapping.js'
import { fieldIssues, formatFieldPath, ProblemError } from '../../errors.js'
import { JsonUpload, UploadMode, UploadQuery, UploadReportSchema } from '../../schemas/history.js'
import { requireHistories } from '../plugins/history.js'
import { checkCsvDialect, CSV_DELIMITERS } from '../../schemas/csv-dialect.js'
import { IDEMPOTENT, WRITE } from './responses.js'

const STREAMED_TYPES = ['text/csv', 'application/x-ndjson', 'application/ndjson']

/**
 * Counts bytes on their way through and fails the stream with a 413 problem
 * once more than `max` have passed: a streamed upload is never held whole in
 * memory, so fastify's body limit does not see it.
 */
export function limitBytes(source: Readable, max: number): Readable {
  let seen = 0
  const counter = new Transform({
    transform(chunk: Buffer, _enc, done) {
      seen += chunk.length
      // Connection: close, so the server does not go on reading (draining) the rest of a huge body.
      if (seen > max) done(new ProblemError('payload-too-large', `The upload is larger than ${max} bytes`, undefined, { connection: 'close' }))
      else done(null, chunk)
    },
  })
  source.on('error', (err) => counter.destroy(err))
  return source.pipe(counter)
}

/**
 * The request bodies as the OpenAPI document shows them, one per media type:
 * the handler reads JSON itself (JsonUpload, then each series on its own so
 * one bad series does not reject the rest) and streams the other two.
 */
function uploadBodies(): Record<string, unknown> {
  const { $schema: _drop, $defs: defs, ...json } = z.toJSONSchema(z.strictObject({ mode: UploadMode.optional(), series: z.array(UploadSeries).min(1) }), {
    io: 'input',
  })
  const text = (description: string) => ({ schema: { type: 'string', description } })
  const ndjson = text('One JSON object per line: a series { sku, frequency?, firstPeriod, demand, tags? } or a row { sku, period, demand, tags? }')
  return {
    'application/json': { schema: inlineDefs(json, defs ?? {}) },
    'application/x-ndjson': ndjson,
    'application/ndjson': ndjson,
    'text/csv': text(
      'A header row, then one sku,period,demand row per line, optionally with a tags column (column names, delimiter and decimal separator set by the query)',
    ),
  }
}

/**
 * The schema with each `#/$defs/<id>` reference replaced by its definition: this
 * body sits inside the OpenAPI document, where a local `$defs` does not resolve.
 */
function inlineDefs(node: unknown, defs: Record<string, unknown>): unknown {
  if (Array.isArray(node)) return node.map((n) => inlineDefs(n, defs))
  if (typeof node !== 'object' || node === null) return node
  const ref = (node as { $ref?: unknown }).$ref
  if (typeof ref === 'string' && ref.startsWith('#/$defs/')) return inlineDefs(defs[ref.slice('#/$defs/'.length)], defs)
  return Object.fromEntries(Object.entries(node).map(([k, v]) => [k, inlineDefs(v, defs)]))
}

/** POST /v1/history: bulk upsert of stored histories from JSON, NDJSON or CSV. */
const routes: FastifyPluginAsyncZod = async (app) => {
  // Only in this plugin's scope: CSV and NDJSON bodies reach the handler as the raw stream.
  app.addContentTypeParser(STREAMED_TYPES, (_request, payload, done) => done(null, payload))

  app.post(
    '',
    {
      schema: {
        tags: ['histories'],
        operationId: 'uploadHistories',
        'x-problems': [...WRITE, ...IDEMPOTENT, 'period-closed'],
        summary: 'Upload demand histories in bulk (JSON, NDJSON or CSV)',
        description: [
          'Content types: application/json `{ "mode"?, "series": [{ "sku", "frequency"?, "firstPeriod", "demand", "tags"? }] }`;',
          'application/x-ndjson, one object per line, either a series as above or a row `{ "sku", "period", "demand", "tags"? }`;',
          'text/csv, long layout: a header row, then one `sku,period,demand` row per line (names set by skuColumn,',
          'periodColumn, demandColumn; other columns ignored), with `delimiter` and `decimalSeparator` (`1,5` with',
          'decimalSeparator=comma, which needs a semicolon or tab delimiter; thousands separators are refused), and an',
          'optional tags column named by tagsColumn (tags separated by `|`). A SKU\'s tags become all the tags of its rows;',
          'a SKU whose rows carry none keeps its stored tags. CSV and NDJSON are read as a stream; gzip bodies',
          '(Content-Encoding: gzip) are decompressed as they arrive.',
          'A period is a date (2024-03-05; summed into the `frequency` buckets, week = ISO week) or a period label',
          '(2024-03, 2024-W09, 2024-Q2, 2024). Buckets between a SKU\'s first and last row without rows become 0.',
          'Bad rows are reported (line, column, reason; first 1000 listed) and the good ones kept; a SKU is written',
          'atomically, and a SKU without good rows keeps its stored history.',
          '`mode`: add (default for dated rows: transactions are added to the stored periods), overwrite (default for',
          'period rows and series: each period sent replaces the stored one), replace (the whole history), or',
          'replace-open-period (a month-to-date file: the one open period of every stored SKU of the frequency).',
          'Resending is safe with Idempotency-Key (the same answer again) or `batch` (each SKU is written once per',
          'batch id while it is remembered). `closeThrough` closes the periods of `frequency` through the one given once',
          'the upload is stored (the answer\'s `closing`), so the feed moves the closed-through period itself.',
        ].join(' '),
        querystring: UploadQuery,
        response: { 200: UploadReportSchema },
        'x-requestBodies': uploadBodies(),
      },
      config: { idempotency: true, bodyTypes: ['application/json', ...STREAMED_TYPES] },
    },
    async (request, reply) => {
      const store = requireHistories(app)
      const q = request.query
      checkCsvDialect(q)
      // Checked before anything is read or stored: a bad or backward closing refuses the whole upload.
      if (q.closeThrough !== undefined) await checkCloseThrough(app, request.tenant, q.frequency, q.closeThrough)
      const type = (request.headers['content-type'] ?? '').split(';')[0]!.trim().toLowerCase()
      const gathering = { frequency: q.frequency, duplicates: q.duplicates }
      // Streamed bodies go through Redis past a few MiB, so their memory does not grow with their size.
      const limits = { parts: STAGED_PARTS, spillBytes: app.config.uploadSpillBytes ?? DEFAULT_UPLOAD_SPILL_BYTES }
      const staged = STREAMED_TYPES.includes(type) ? new StagedUpload(gathering, store.uploadStaging(request.tenant), limits) : null
      const acc = staged ?? new HistoryAccumulator(gathering)
      try {
        let mode = q.mode
        if (staged !== null) {
          const declared = Number(request.headers['content-length'] ?? 0)
          if (declared > app.config.bodyLimitBytes) {
            throw new ProblemError('payload-too-large', `The upload is larger than ${app.config.bodyLimitBytes} bytes`, undefined, {
              connection: 'close',
            })
          }
          const source = limitBytes(request.body as Readable, app.config.bodyLimitBytes)
          try {
            if (type === 'text/csv') {
              const { skuColumn, periodColumn, demandColumn, tagsColumn, decimalSeparator } = q
              const layout = { delimiter: CSV_DELIMITERS[q.delimiter], skuColumn, periodColumn, demandColumn, decimalSeparator }
              await readCsvUpload(source, tagsColumn === undefined ? layout : { ...layout, tagsColumn }, acc)
            } else {
              await readNdjsonUpload(source, acc)
            }
          } catch (err) {
            // The rest of the body was not read: close rather than let the server drain it.
            reply.header('connection', 'close')
            if (err instanceof UploadFormatError) {
              throw new ProblemError('validation-failed', err.message, [{ path: err.field, message: err.message }])
            }
            throw err
          }
        } else {
          const body = JsonUpload.safeParse(request.body)
          if (!body.success) {
            const issues = fieldIssues(body.error.issues)
            const errors = issues.slice(0, MAX_FIELD_ERRORS).map((i) => ({ path: formatFieldPath(i.path, 'body'), message: i.message }))
            throw new ProblemError('validation-failed', `The request body has ${issues.length} invalid field(s)`, errors)
          }
          if (mode !== undefined && body.data.mode !== undefined && mode !== body.data.mode) {
            throw new ProblemError('validation-failed', 'mode differs between the query string and the body', [
              { path: 'mode', message: `query says ${mode}, body says ${body.data.mode}` },
            ])
          }
          mode = body.data.mode ?? mode
          body.data.series.forEach((value, item) => {
            const s = parseUploadSeries(value, q.frequency)
            if ('reason' in s) acc.errors.add({ item, ...s, column: `series[${item}].${s.column}` })
            else acc.addSeries(s.sku, s.incoming, { item })
          })
        }
        if (mode === undefined) {
          const resolved = defaultMode(acc.kinds)
          if ('reason' in resolved) throw new ProblemError('validation-failed', resolved.reason, [{ path: 'mode', message: resolved.reason }])
          mode = resolved.mode
        }
        let openPeriod: number | undefined
        if (mode === 'replace-open-period') openPeriod = openPeriodOf(q.openPeriod, acc)
        else if (q.openPeriod !== undefined) {
          throw new ProblemError('validation-failed', 'openPeriod applies only to mode=replace-open-period', [
            { path: 'openPeriod', message: `mode is ${mode}` },
          ])
        }
        const feedBatch = q.batch === undefined ? undefined : { id: q.batch, ttlSeconds: app.config.uploadBatchTtlSeconds ?? DEFAULT_BATCH_TTL_SECONDS }
        const quota = app.config.quotaSkusPerTenant ?? DEFAULT_QUOTA_SKUS_PER_TENANT
        const report = await commitUpload(acc, withSkuQuota(store, store, quota), request.tenant, mode, {
          ...(feedBatch === undefined ? {} : { feedBatch }),
          ...(openPeriod === undefined ? {} : { openPeriod }),
        })
        const stagedParts = staged?.partsStaged ?? 0
        request.log.info({ type, mode: report.mode, rows: report.rows, skus: report.skus, stagedParts }, 'history upload')
        if (q.closeThrough === undefined) return { ...report, errors: [...report.errors] }
        const erp = requireErp(app)
        const closing = await closePeriod({ histories: store, closing: erp.closing, accuracy: erp.accuracy }, request.tenant, q.frequency, q.closeThrough)
        if (closing.outcome === 'behind') {
          // Another request closed further meanwhile: the upload is stored; say so rather than pretend it closed.
          throw new ProblemError(
            'period-closed',
            `The upload was stored, but ${q.frequency} periods were closed through ${closing.previous} meanwhile; closing only moves forward`,
            undefined,
            {},
            { dependsOnState: true },
          )
        }
        request.log.info({ frequency: q.frequency, closedThrough: closing.closedThrough, advanced: closing.advancedSkus }, 'periods closed by upload')
        return { ...report, errors: [...report.errors], closing: { ...closing, outcome: closing.outcome } }
      } finally {
        // Whatever was staged is written or refused by now.
        await staged?.discard()
      }
    },
  )
}

/**
 * closeThrough must be a period label of the upload's frequency, not behind the
 * tenant's closed-through period, and the server must keep closing records.
 * @throws ProblemError 400 naming closeThrough, 409 period-closed, or 503 not-ready
 */
async function checkCloseThrough(app: Parameters<FastifyPluginAsyncZod>[0], tenant: string, frequency: Frequency, label: string): Promise<void> {
  let ordinal: number
  try {
    ordinal = parsePeriod(label, frequency)
  } catch (err) {
    const message = `is not a ${frequency} period: ${(err as Error).message}`
    throw new ProblemError('validation-failed', `closeThrough ${message}`, [{ path: 'closeThrough', message }])
  }
  const current = (await requireErp(app).closing.ordinals(tenant))[frequency]
  if (current !== undefined && ordinal < current) {
    throw new ProblemError(
      'period-closed',
      `${frequency} periods are already closed through ${formatPeriod(current, frequency)}; closing only moves forward (nothing was stored)`,
      undefined,
      {},
      { dependsOnState: true },
    )
  }
}

/** Feed batch ids are remembered 35 days unless configured: a monthly feed's files stay known until the month after. */
const DEFAULT_BATCH_TTL_SECONDS = 35 * 24 * 3600

/**
 * The open period of a replace-open-period upload: the one named, or else the
 * one period all accepted rows fall in (a month-to-date file holds one).
 * @throws ProblemError (400 naming openPeriod) when it is neither given nor evident
 */
function openPeriodOf(named: string | undefined, acc: { readonly frequency: Frequency; readonly span: { readonly lo: number; readonly hi: number } | null }): number {
  if (named !== undefined) {
    const bucket = bucketOf(named, acc.frequency)
    // A date is a day's own label; for coarser frequencies the open period is named by its label.
    if ('reason' in bucket || (bucket.dated && acc.frequency !== 'day')) {
      const message = 'reason' in bucket ? bucket.reason : `give a ${acc.frequency} period label, not a date`
      throw new ProblemError('validation-failed', `openPeriod: ${message}`, [{ path: 'openPeriod', message }])
    }
    return bucket.ordinal
  }
  const span = acc.span
  if (span === null || span.lo !== span.hi) {
    const message =
      span === null
        ? 'the upload has no accepted rows to take the open period from; name it with openPeriod'
        : `the rows span ${formatPeriod(span.lo, acc.frequency)}..${formatPeriod(span.hi, acc.frequency)}; name the open period with openPeriod`
    throw new ProblemError('validation-failed', message, [{ path: 'openPeriod', message }])
  }
  return span.lo
}

export default routes
