import fp from 'fastify-plugin'
import swagger from '@fastify/swagger'
import swaggerUi from '@fastify/swagger-ui'
import { createJsonSchemaTransform, jsonSchemaTransformObject } from 'fastify-type-provider-zod'
import { z } from 'zod'
import { PROBLEM_BASE_URI, PROBLEM_CONTENT_TYPE } from '../../errors.js'
import { finishDocument } from '../openapi-transform.js'
import { Problem } from '../../schemas/problem.js'
import { RunRequest } from '../../schemas/run.js'

export const API_VERSION = '1.0.0'
export const TITLE = 'Almanac demand forecasting API'

/** The page mark: a small calendar with a leaf (our own drawing). */
const ICON_SVG =
  '<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 32 32"><rect x="3" y="5" width="26" height="24" rx="3" fill="#2f6f4f"/>' +
  '<rect x="3" y="5" width="26" height="7" rx="3" fill="#1f4f37"/><path d="M9 24c2-8 8-11 14-11-1 7-6 11-14 11z" fill="#e8f3ec"/></svg>'
/** The mark beside Almanac's name, for the page's top bar. */
const LOGO_SVG =
  '<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 160 32" height="32">' +
  ICON_SVG.replace(/^<svg[^>]*>/, '<g>').replace(/<\/svg>$/, '</g>') +
  '<text x="40" y="22" font-family="sans-serif" font-size="18" fill="#ffffff">Almanac</text></svg>'

// Problem details are the error body of every route (openapi-transform.ts refers to the component).
if (!z.globalRegistry.has(Problem)) z.globalRegistry.add(Problem, { id: 'Problem' })

// The request body of both forecast routes becomes one named component (RunRequestInput).
if (!z.globalRegistry.has(RunRequest)) {
  z.globalRegistry.add(RunRequest, {
    id: 'RunRequest',
    description: 'Run-level settings plus the series; per-series frequency and seasonLength override the run\'s',
  })
}

const DESCRIPTION = `Reforecasts demand for many SKUs at once.

**Cautions.** Forecasts are statistical estimates, not guarantees. Prediction
intervals describe the uncertainty the model sees in past data; promotions,
supply shocks and new competitors are not in that data. Review every forecast
(model, holdout error, warnings) before it drives an order or a stock target.

Small batches: \`POST /v1/forecast\` answers at once. Large batches:
\`POST /v1/runs\`, then poll the run and page its results.

Bodies may be sent gzip-compressed (\`Content-Encoding: gzip\`); answers are
gzip-compressed for clients that send \`Accept-Encoding: gzip\`.

Errors are RFC 9457 problem details (\`${PROBLEM_CONTENT_TYPE}\`) with a
\`type\` under ${PROBLEM_BASE_URI}; validation failures list each offending
field as \`series[3].demand[2]\`.`

/**
 * OpenAPI 3.1 document generated from the zod route schemas, served at
 * /openapi.json, and the interactive page at /docs.
 */
export default fp(
  async (app) => {
    await app.register(swagger, {
      openapi: {
        openapi: '3.1.0',
        info: { title: TITLE, version: API_VERSION, description: DESCRIPTION },
        // The groups of the README's API table, in its order.
        tags: [
          { name: 'forecasts', description: 'A few series forecast in the request, and the latest forecast of a SKU' },
          { name: 'runs', description: 'Asynchronous forecast runs for many SKUs: submit, poll, page the results, cancel' },
          { name: 'histories', description: 'Stored demand histories: one SKU at a time or bulk uploads (JSON, NDJSON, CSV)' },
          { name: 'accuracy', description: 'How forecasts did once actual demand arrived' },
          { name: 'worklist', description: 'What needs a planner\'s look: biased, largely changed, failed and short-history SKUs' },
          { name: 'schedules', description: 'Runs that start by themselves over stored histories' },
          { name: 'callbacks', description: 'Signed notifications when runs end, and their delivery log' },
          { name: 'operations', description: 'Liveness and readiness' },
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
    await app.register(swaggerUi, {
      routePrefix: '/docs',
      // Almanac's own name and mark on the page, not the UI library's.
      logo: { type: 'image/svg+xml', content: Buffer.from(LOGO_SVG, 'utf8'), href: '/docs', target: '_self' },
      theme: {
        title: TITLE,
        favicon: [{ filename: 'favicon.svg', rel: 'icon', sizes: 'any', type: 'image/svg+xml', content: Buffer.from(ICON_SVG, 'utf8') }],
      },
    })
    app.get(
      '/openapi.json',
      { schema: { hide: true }, config: { auth: false, rateLimit: false } },
      async () => app.swagger(),
    )
  },
  { name: 'swagger', dependencies: ['config'] },
)
