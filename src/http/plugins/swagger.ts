import fp from 'fastify-plugin'
import swagger from '@fastify/swagger'
import swaggerUi from '@fastify/swagger-ui'
import { createJsonSchemaTransform, jsonSchemaTransformObject } from 'fastify-type-provider-zod'
import { PROBLEM_BASE_URI, PROBLEM_CONTENT_TYPE, PROBLEM_TYPES } from '../../errors.js'

export const API_VERSION = '1.0.0'

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

type OpenApiDoc = ReturnType<typeof jsonSchemaTransformObject>
interface OpenApiResponse {
  description?: string
  content?: Record<string, unknown>
}

const STATUS_DESCRIPTIONS: Record<string, string> = {
  '200': 'OK',
  '202': 'Accepted; poll the run at the Location header',
}

/** Error responses are problem details: say so in the document, and describe each status. */
function problemContentType(doc: OpenApiDoc): OpenApiDoc {
  const paths = (doc as { paths?: Record<string, Record<string, { responses?: Record<string, OpenApiResponse> }>> }).paths
  for (const item of Object.values(paths ?? {})) {
    for (const op of Object.values(item)) {
      for (const [status, response] of Object.entries(op.responses ?? {})) {
        if (Number(status) >= 400 && response.content?.['application/json']) {
          response.content = { [PROBLEM_CONTENT_TYPE]: response.content['application/json'] }
          const titles = Object.values(PROBLEM_TYPES)
            .filter((p) => String(p.status) === status)
            .map((p) => p.title)
          response.description = titles.join(' / ')
        } else if (STATUS_DESCRIPTIONS[status] && response.description === 'Default Response') {
          response.description = STATUS_DESCRIPTIONS[status]
        }
      }
    }
  }
  return doc
}

/**
 * Keep only referenced component schemas (the zod registry yields an input and
 * an output variant of each) and drop their `$schema`/`$id` keys.
 */
function pruneComponents(doc: OpenApiDoc): OpenApiDoc {
  const schemas = (doc as { components?: { schemas?: Record<string, Record<string, unknown>> } }).components?.schemas
  if (!schemas) return doc
  const used = new Set<string>()
  const collect = (v: unknown) => {
    for (const m of JSON.stringify(v).matchAll(/"#\/components\/schemas\/([^"]+)"/g)) used.add(m[1])
  }
  collect((doc as { paths?: unknown }).paths)
  // Components may reference each other; repeat until nothing new appears.
  for (let size = -1; size !== used.size; ) {
    size = used.size
    for (const name of [...used]) collect(schemas[name])
  }
  for (const name of Object.keys(schemas)) {
    if (!used.has(name)) delete schemas[name]
    else {
      delete schemas[name].$schema
      delete schemas[name].$id
    }
  }
  return doc
}

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
      transformObject: (input) => pruneComponents(problemContentType(jsonSchemaTransformObject(input))),
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
