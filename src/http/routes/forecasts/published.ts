import { Readable } from 'node:stream'
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { ProblemError } from '../../../errors.js'
import { prefersCsv } from '../../csv-export.js'
import { publishedSource, publishedText } from '../../published-export.js'
import { publishedRows } from '../../../runs/published-export.js'
import { PublishedQuery, PublishedRowSchema } from '../../../schemas/published.js'
import { requireHistories } from '../../plugins/history.js'
import { READ } from '../responses.js'
import { checkCsvDialect } from '../../../schemas/csv-dialect.js'

/** GET /v1/forecasts/published: every current published forecast, streamed as CSV or NDJSON. */
const routes: FastifyPluginAsyncZod = async (app) => {
  app.get(
    '/published',
    {
      schema: {
        tags: ['forecasts'],
        operationId: 'exportPublishedForecasts',
        'x-problems': READ,
        summary: 'Export every current published forecast (CSV or NDJSON)',
        description:
          'Streams one row per SKU and forecast period of every SKU\'s current published forecast, the same figures as ' +
          'GET /v1/skus/{sku}/forecast: sku, frequency, period, demand (statistical), the adjustment in force, finalDemand, ' +
          'interval bounds, model, runId, producedAt, and the replenishment figures when the forecast has them. ' +
          'Accept: text/csv gives CSV (a header row; comma delimiter and dot decimal unless delimiter and decimalSeparator ' +
          'say otherwise, as in the results export; columns sku, frequency, period, demand, ' +
          'setDemand, changePercent, finalDemand, low<level>, high<level> per intervalLevels, model, runId, producedAt, then ' +
          'the replenishment columns of the results CSV, empty where none; text cells starting with = + - @ are prefixed with \'); ' +
          'anything else gives NDJSON (application/x-ndjson), one PublishedForecastRow per line. Optional filters: tag, frequency. ' +
          'SKUs whose publishing run\'s results have expired are left out. Rows come in no stated order (by SKU with tag). ' +
          'Figures are estimates to review before ordering.',
        querystring: PublishedQuery,
        produces: ['application/x-ndjson', 'text/csv'],
        response: { 200: PublishedRowSchema },
        'x-responseMediaTypes': {
          200: {
            'text/csv': { schema: { type: 'string', description: 'RFC 4180 CSV with a header row, one row per SKU and forecast period' } },
          },
        },
      },
      // The answer is a stream; the row schema documents one NDJSON line.
      serializerCompiler: () => (data) => JSON.stringify(data),
    },
    async (request, reply) => {
      const { scanPublished, publishedOf } = app.gateway
      if (!scanPublished || !publishedOf) throw new ProblemError('not-ready', 'The published forecasts export is not configured on this server')
      const { tag, frequency, intervalLevels, delimiter, decimalSeparator } = request.query
      checkCsvDialect({ delimiter, decimalSeparator })
      const histories = tag === undefined ? null : requireHistories(app)
      const source = publishedSource(
        { gateway: { scanPublished: scanPublished.bind(app.gateway), publishedOf: publishedOf.bind(app.gateway) }, histories, adjustments: app.adjustments },
        request.tenant,
        tag,
      )
      const rows = publishedRows(source, frequency === undefined ? {} : { frequency })
      reply.header('vary', 'accept')
      const csv = prefersCsv(request.headers.accept)
      const levels = [...new Set(intervalLevels.split(',').map(Number))].sort((a, b) => a - b)
      request.log.info({ tag, frequency, csv }, 'published forecasts export')
      if (csv) reply.type('text/csv; charset=utf-8').header('content-disposition', 'attachment; filename="published-forecasts.csv"')
      else reply.type('application/x-ndjson; charset=utf-8')
      // A stream bypasses the serializer; the cast only satisfies the typed reply.
      return reply.send(Readable.from(publishedText(rows, csv ? { kind: 'csv', levels, dialect: { delimiter, decimalSeparator } } : { kind: 'ndjson' })) as unknown as never)
    },
  )
}

export default routes
