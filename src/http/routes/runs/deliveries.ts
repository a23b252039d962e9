import { z } from 'zod'
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { RunIdParams } from '../../../schemas/params.js'
import { DELIVERY_STATES } from '../../../storage/delivery-store.js'
import { requireErp } from '../../plugins/erp.js'
import { COMMON_PROBLEMS, NOT_FOUND } from '../responses.js'
import { runNotFound } from './index.js'

const Attempt = z.object({
  attempt: z.number().int(),
  at: z.string().describe('ISO-8601 start of the attempt'),
  statusCode: z.number().int().nullable().describe('HTTP status the receiver answered; null when there was no answer'),
  error: z.string().nullable().describe('Why the attempt failed (HTTP 500, ECONNREFUSED, timed out...); null on success'),
  durationMs: z.number().int(),
})

export const DeliverySchema = z
  .object({
    id: z.string(),
    url: z.string(),
    event: z.string(),
    source: z.enum(['run', 'standing']).describe("run: the run's callbackUrl; standing: a /v1/callbacks entry"),
    callbackId: z.string().nullable(),
    state: z.enum(DELIVERY_STATES).describe('pending before the first attempt; dead after the last failed one'),
    maxAttempts: z.number().int(),
    attempts: z.array(Attempt),
    createdAt: z.string(),
  })
  .meta({ id: 'Delivery' })

/** GET /v1/runs/{runId}/deliveries: the webhook delivery log of a run. */
const routes: FastifyPluginAsyncZod = async (app) => {
  app.get(
    '/:runId/deliveries',
    {
      schema: {
        tags: ['runs', 'callbacks'],
        summary: 'Webhook deliveries of a run',
        description: 'Every callback called for the run with each attempt. Kept as long as the run results.',
        params: RunIdParams,
        response: { 200: z.object({ items: z.array(DeliverySchema) }), ...COMMON_PROBLEMS, ...NOT_FOUND },
      },
    },
    async (request) => {
      const erp = requireErp(app)
      const { runId } = request.params
      const run = await app.gateway.get(request.tenant, runId)
      if (!run) throw runNotFound(runId)
      const items = await erp.deliveries.list(request.tenant, runId)
      return { items } as z.input<z.ZodObject<{ items: z.ZodArray<typeof DeliverySchema> }>>
    },
  )
}

export default routes
