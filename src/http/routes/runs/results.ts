import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { RunIdParams, ResultsQuery } from '../../../schemas/params.js'
import { ResultPageSchema, type ResultPageBody } from '../../../schemas/results.js'
import { COMMON_PROBLEMS, NOT_FOUND } from '../responses.js'
import { runNotFound } from './index.js'

/** GET /v1/runs/{runId}/results: one page of per-SKU results. */
const routes: FastifyPluginAsyncZod = async (app) => {
  app.get(
    '/:runId/results',
    {
      schema: {
        tags: ['runs'],
        summary: 'Page through the results of a run',
        description: 'Pass nextCursor back as cursor for the next page; nextCursor is null on the last page.',
        params: RunIdParams,
        querystring: ResultsQuery,
        response: { 200: ResultPageSchema, ...COMMON_PROBLEMS, ...NOT_FOUND },
      },
    },
    async (request) => {
      const { runId } = request.params
      const { limit, cursor, sku } = request.query
      const page = await app.gateway.results(request.tenant, runId, { limit, cursor, sku })
      if (!page) throw runNotFound(runId)
      return page as ResultPageBody
    },
  )
}

export default routes
