import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { SkuListPage, SkuListQuery } from '../../../schemas/history.js'
import { requireHistories } from '../../plugins/history.js'
import { READ } from '../responses.js'

/** GET /v1/skus: page through the SKUs with a stored history. */
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
          'Ordered by SKU (byte order). Filter by tag and/or SKU prefix; pass nextCursor back as cursor for the next page.',
        querystring: SkuListQuery,
        response: { 200: SkuListPage },
      },
    },
    async (request) => {
      const { limit, cursor, tag, prefix } = request.query
      const page = await requireHistories(app).list(request.tenant, { limit, cursor, tag, prefix })
      return { items: page.items.map((i) => ({ ...i, tags: [...i.tags] })), nextCursor: page.nextCursor }
    },
  )
}

export default routes
