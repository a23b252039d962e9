import { z } from 'zod'
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { PageQuery } from '../../schemas/params.js'
import { requireHistories } from '../plugins/history.js'
import { READ } from './responses.js'

const TagPage = z
  .object({
    items: z.array(
      z.object({
        tag: z.string(),
        skus: z.number().int().min(1).describe('Stored SKUs carrying the tag'),
      }),
    ),
    nextCursor: z.string().nullable().describe('null on the last page'),
  })
  .meta({ id: 'TagPage' })

/** GET /v1/tags: the tenant's tags, for choosing one (accuracy and value added by tag, SKU filters). */
const routes: FastifyPluginAsyncZod = async (app) => {
  app.get(
    '/v1/tags',
    {
      schema: {
        tags: ['histories'],
        operationId: 'listTags',
        'x-problems': READ,
        summary: 'List the tags of stored histories with their SKU counts',
        description:
          'Ordered by tag (byte order). A tag is listed while at least one stored history carries it; counts follow every ' +
          'history write and delete.',
        querystring: PageQuery,
        response: { 200: TagPage },
      },
    },
    async (request) => requireHistories(app).tags(request.tenant, request.query),
  )
}

export default routes
