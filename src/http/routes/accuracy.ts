import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { PageQuery, pageSchema } from '../../schemas/params.js'
import { requireErp } from '../plugins/erp.js'
import { AccuracySummarySchema } from './skus/accuracy.js'
import { READ } from './responses.js'

/** GET /v1/accuracy/exceptions: the SKUs whose forecasts are persistently off. */
const routes: FastifyPluginAsyncZod = async (app) => {
  app.get(
    '/v1/accuracy/exceptions',
    {
      schema: {
        tags: ['accuracy'],
        operationId: 'listAccuracyExceptions',
        'x-problems': READ,
        summary: 'SKUs whose tracking signal is beyond ±4',
        description:
          'The exception list for planners, ordered by SKU: |tracking signal| > 4 (common practice) means the ' +
          'forecast errors lean one way. Review the model or the data of these SKUs before ordering on their forecasts.',
        querystring: PageQuery,
        response: {
          200: pageSchema(AccuracySummarySchema),
        },
      },
    },
    async (request) => {
      const { limit, cursor } = request.query
      return requireErp(app).accuracy.exceptions(request.tenant, limit, cursor)
    },
  )
}

export default routes
