import { z } from 'zod'
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'

const Access = z
  .object({
    apiKeyRequired: z
      .boolean()
      .describe('true: every /v1 route needs Authorization: Bearer <key>; false: no keys are configured'),
  })
  .meta({ id: 'Access' })

/**
 * GET /access: whether this server asks for an API key. The workbench reads it
 * before it shows a sign-in form; it needs no key and tells nothing about any key.
 * Outside /v1 like the health routes: every /v1 route needs a key when keys are configured.
 */
const routes: FastifyPluginAsyncZod = async (app) => {
  const apiKeyRequired = app.config.apiKeys.size > 0
  app.get(
    '/access',
    {
      config: { auth: false, rateLimit: false },
      schema: {
        operationId: 'getAccess',
        tags: ['operations'],
        summary: 'Whether an API key is required',
        description: 'Answers without a key. The workbench at /app/ asks for a key only when apiKeyRequired is true.',
        security: [],
        response: { 200: Access },
      },
    },
    async () => ({ apiKeyRequired }),
  )
}

export default routes
