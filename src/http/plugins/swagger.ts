import fp from 'fastify-plugin'
import swagger from '@fastify/swagger'
import swaggerUi from '@fastify/swagger-ui'
import { createJsonSchemaTransform, jsonSchemaTransformObject } from 'fastify-type-provider-zod'
import { z } from 'zod'
import { PROBLEM_BASE_URI, PROBLEM_CONTENT_TYPE } from '../../errors.js'
import { finishDocument } from '../openapi-transform.js'
import { RunRequest } from '../../schemas/run.js'

export const API_VERSION = '1.0.0'

// The request body of both forecast routes becomes one named component (RunRequestInput).
if (!z.globalRegistry.has(RunRequest)) {
  z.globalRegistry.add(RunRequest, {
    id: 'RunRequest',
    description: 'Run-level settings plus the series; per-series frequency, start and seasonLength override the run\'s',
  })
}

const DESCRIPTION = `Reforecasts demand for many SKUs at once.

**Cautions.** Forecasts are statistical estimates, not guarantees. Prediction
intervals describe the uncertainty the model sees in past data; promotions,
supply shocks and new competitors are not in that data. Review every forecast
(model, holdout error, warnings) before it drives an order or a stock target.

Small batches: \`POST /v1/forecast\` answers at once. Large batches:
\`POST /v1/runs\`, then poll the run and page its results.

Errors are RFC 9457 problem details (\`${PROBLEM_CONTENT_TYPE}\`) with a
\`type\` under ${PROBLEM_BASE_URI}; validation failures list each offending
field as \`series[3].values[2]\`.`

/**
 * OpenAPI 3.1 document generated from the zod route schemas, served at
 * /openapi.json, and the interactive page at /docs.
 */
export default fp(
  async (app) => {
    await app.register(swagger, {
      openapi: {
        openapi: '3.1.0',
        info: { title: 'Almanac demand forecasting API', version: API_VERSION, description: DESCRIPTION },
        tags: [
          { name: 'forecasts', description: 'Synchronous forecasts for a handful of series' },
          { name: 'runs', description: 'Asynchronous forecast runs for many series' },
          { name: 'skus', description: 'Latest forecast per SKU' },
          { name: 'operations', description: 'Health and readiness' },
        ],
        components: {
          securitySchemes: {
            apiKey: { type: 'http', scheme: 'bearer', description: 'API key issued per tenant' },
          },
        },
        security: [{ apiKey: [] }],
      },
      transform: createJsonSchemaTransform({ skipList: [] }),
      transformObject: (input) => finishDocument(jsonSchemaTransformObject(input)),
    })
    await app.register(swaggerUi, { routePrefix: '/docs' })
    app.get(
      '/openapi.json',
      { schema: { hide: true }, config: { auth: false, rateLimit: false } },
      async () => app.swagger(),
    )
  },
  { name: 'swagger', dependencies: ['config'] },
)
