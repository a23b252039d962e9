import { Readable } from 'node:stream'
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { CSV_PAGE_SIZE, prefersCsv, runResultsCsv } from '../../csv-export.js'
import { RunIdParams, ResultsQuery } from '../../../schemas/params.js'
import { ResultPageSchema, type ResultPageBody } from '../../../schemas/results.js'
import { runNotFound } from './index.js'
import { compactItem } from '../../../runs/views.js'
import { READ_ONE } from '../responses.js'
import { checkCsvDialect } from '../../../schemas/csv-dialect.js'

/** GET /v1/runs/{runId}/results: one page of per-SKU results. */
const routes: FastifyPluginAsyncZod = async (app) => {
  app.get(
    '/:runId/results',
    {
      schema: {
        tags: ['runs'],
        operationId: 'listRunResults',
        'x-problems': READ_ONE,
        summary: 'Page through the results of a run',
        description:
          'Pass nextCursor back as cursor for the next page; nextCursor is null on the last page. ' +
          'With Accept: text/csv the whole run (or the one `sku`) streams as CSV instead, one row per SKU and ' +
          'forecast period: sku, period, demand, low<level>, high<level> (per interval level), model, rankBy, holdoutError, ' +
          'failure (limit, cursor and view are then ignored). Text cells starting with = + - @ are prefixed with \'. ' +
          'holdoutError is in the unit of rankBy (percent for mape, smape and wape; demand units for mae and rmse; unitless for mase). ' +
          'delimiter (comma, semicolon, tab) and decimalSeparator (point, or comma for 1,5 with a semicolon or tab ' +
          'delimiter) set the CSV dialect; JSON answers ignore them. ' +
          'view=compact leaves out each item\'s candidates.',
        params: RunIdParams,
        querystring: ResultsQuery,
        response: { 200: ResultPageSchema },
        'x-responseMediaTypes': {
          200: {
            'text/csv': {
              schema: { type: 'string', description: 'RFC 4180 CSV with a header row, one row per SKU and forecast period' },
            },
          },
        },
      },
      // Pages of up to 1000 stored items: parsing each through zod took about
      // three times plain JSON (bench/RESULTS.md, "Figures behind choices in the code"). Items
      // come from the run store, written by the same code that defines the
      // schema, so this route serializes them directly; the schema still
      // documents them.
      serializerCompiler: () => (data) => JSON.stringify(data),
    },
    async (request, reply) => {
      const { runId } = request.params
      const { limit, cursor, sku, view, delimiter, decimalSeparator } = request.query
      checkCsvDialect({ delimiter, decimalSeparator })
      reply.header('vary', 'accept') // JSON or CSV by the Accept header
      if (prefersCsv(request.headers.accept)) {
        const run = await app.gateway.get(request.tenant, runId)
        if (!run) throw runNotFound(runId)
        const pages = (next: string | undefined) => app.gateway.results(request.tenant, runId, { limit: CSV_PAGE_SIZE, cursor: next, sku })
        reply.type('text/csv; charset=utf-8').header('content-disposition', `attachment; filename="run-${runId}.csv"`)
        // A stream bypasses the JSON serializer; the cast only satisfies the typed reply.
        return reply.send(Readable.from(runResultsCsv(run, pages, { delimiter, decimalSeparator })) as unknown as ResultPageBody)
      }
      if (app.gateway.resultsJson) {
        // The page's JSON text straight from the stored items (the serializer passes a Buffer through).
        const body = await app.gateway.resultsJson(request.tenant, runId, { limit, cursor, sku, view })
        if (!body) throw runNotFound(runId)
        return reply.type('application/json; charset=utf-8').send(body as unknown as ResultPageBody)
      }
      const page = await app.gateway.results(request.tenant, runId, { limit, cursor, sku })
      if (!page) throw runNotFound(runId)
      return (view === 'compact' ? { ...page, items: page.items.map(compactItem) } : page) as ResultPageBody
    },
  )
}

export default routes
