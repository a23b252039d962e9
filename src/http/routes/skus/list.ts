import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { SkuListPage, SkuListQuery } from '../../../schemas/history.js'
import { requireHistories } from '../../plugins/history.js'
import { READ } from '../responses.js'

/** GET /v1/skus: page through the SKUs with a stored history, filtered by their published outcome. */
const routes: FastifyPluginAsyncZod = async (app) => {
  app.get(
    '',
    {
      schema: {
        tags: ['histories'],
        operationId: 'listSkus',
        'x-problems': READ,
        summary: 'List SKUs with a stored history',
        description:
          'Ordered by SKU (byte order); pass nextCursor back as cursor for the next page. Filters combine: tag, SKU ' +
          'prefix, and the newest published outcome of each SKU (model, warning, failed, holdout error) or the ' +
          'accuracy exception list. A filtered page examines a bounded number of SKUs, so it may hold fewer than ' +
          'limit items (even none) while nextCursor is not null; only a null nextCursor means the end. Each item ' +
          'carries `published` once a publishing run included the SKU.',
        querystring: SkuListQuery,
        response: { 200: SkuListPage },
      },
    },
    async (request) => {
      const { limit, cursor, ...filter } = request.query
      const page = await requireHistories(app).list(request.tenant, { limit, cursor, ...filter })
      return {
        items: page.items.map(({ published, ...i }) => ({
          ...i,
          tags: [...i.tags],
          ...(published === undefined ? {} : { published: { ...published, warnings: [...published.warnings] } }),
        })),
        nextCursor: page.nextCursor,
      }
    },
  )
}

export default routes
