import { z } from 'zod'
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { PageQuery, pageSchema, RunIdParams } from '../../../schemas/params.js'
import { Failure } from '../../../schemas/results.js'
import { DELIVERY_STATUSES } from '../../../storage/erp/delivery-store.js'
import { requireErp } from '../../plugins/erp.js'
import { runNotFound } from './index.js'
import { READ_ONE } from '../responses.js'

const Attempt = z.object({
  attempt: z.number().int().min(1),
  at: z.string().describe('ISO-8601 start of the attempt'),
  httpStatus: z.number().int().min(100).max(999).nullable().describe('HTTP status the receiver answered; null when there was no answer'),
  failure: Failure.nullable().describe('Why the attempt failed (receiver-status, timeout, address-not-allowed, network-error); null on success'),
  durationMs: z.number().int().min(0),
})

export const DeliverySchema = z
  .object({
    id: z.string().describe('The Almanac-Delivery header: unique per delivery, the same on each retry'),
    url: z.string(),
    event: z.string(),
    source: z.enum(['run', 'standing']).describe("run: the run's callbackUrl; standing: a /v1/callbacks entry"),
    callbackId: z.string().nullable(),
    status: z.enum(DELIVERY_STATUSES).describe('pending before the first attempt; dead after the last failed one'),
    maxAttempts: z.number().int().min(1),
    attempts: z.array(Attempt),
    createdAt: z.string(),
  })
  .meta({ id: 'Delivery' })

/** GET /v1/runs/{runId}/deliveries: the callback delivery log of a run. */
const routes: FastifyPluginAsyncZod = async (app) => {
  app.get(
    '/:runId/deliveries',
    {
      schema: {
        tags: ['callbacks'],
        operationId: 'listRunDeliveries',
        'x-problems': READ_ONE,
        summary: 'Callback deliveries of a run, oldest first',
        description: 'Every callback called for the run with each attempt. Kept as long as the run results.',
        params: RunIdParams,
        querystring: PageQuery,
        response: { 200: pageSchema(DeliverySchema) },
      },
    },
    async (request) => {
      const erp = requireErp(app)
      const { runId } = request.params
      const run = await app.gateway.get(request.tenant, runId)
      if (!run) throw runNotFound(runId)
      return erp.deliveries.list(request.tenant, runId, request.query.limit, request.query.cursor)
    },
  )
}

export default routes
