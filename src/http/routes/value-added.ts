import { z } from 'zod'
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { TAG_PATTERN } from '../../history/types.js'
import { ValueAddedByAuthor, ValueAddedSummary } from '../../schemas/adjustments.js'
import { requireAdjustments } from '../plugins/adjustments.js'
import { requireHistories } from '../plugins/history.js'
import { READ } from './responses.js'

/** SKU names read at a time when pooling a tag. */
const POOL_BATCH = 500

const TagQuery = z.object({
  tag: z.string().regex(TAG_PATTERN, 'is not a valid tag').describe('SKUs carrying this tag, e.g. category:garden'),
})

const TagValueAdded = ValueAddedSummary.extend({
  tag: z.string(),
  skus: z.number().int().min(0).describe('SKUs of the tag with at least one scored period'),
  byAuthor: z.array(ValueAddedByAuthor).describe('Per author, over the periods they adjusted in any SKU of the tag'),
}).meta({ id: 'TagValueAdded' })

/** GET /v1/value-added/by-tag: forecast value added pooled over the SKUs of a tag, and per planner. */
const routes: FastifyPluginAsyncZod = async (app) => {
  app.get(
    '/v1/value-added/by-tag',
    {
      schema: {
        tags: ['accuracy'],
        operationId: 'getTagValueAdded',
        'x-problems': READ,
        summary: 'Forecast value added pooled over the SKUs of a tag, and per planner',
        description:
          'Every scored period of every SKU carrying the tag, pooled: mean absolute errors of the naive, statistical and ' +
          'final (adjusted) forecasts and the value each step added, in demand units; byAuthor the same over the periods ' +
          'each planner adjusted. A pooled MAE weighs SKUs by their demand, so large SKUs dominate it. Reads every SKU of ' +
          'the tag, so it takes longer the larger the tag.',
        querystring: TagQuery,
        response: { 200: TagValueAdded },
      },
    },
    async (request) => {
      const { tag } = request.query
      const skus = requireHistories(app).skusOfTag(request.tenant, tag, POOL_BATCH)
      return { tag, ...(await requireAdjustments(app).pooledValueAdded(request.tenant, skus)) }
    },
  )
}

export default routes
