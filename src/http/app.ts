import { randomUUID } from 'node:crypto'
import Fastify, { type FastifyBaseLogger, type FastifyInstance, type FastifyReply } from 'fastify'
import { serializerCompiler } from 'fastify-type-provider-zod'
import type { RedisClient } from '../storage/redis.js'
import type { Config } from '../config.js'
import { createLogger, type Logger } from '../logger.js'
import type { HistoryStore } from '../storage/histories/history-store.js'
import type { IdempotencyStore } from '../storage/erp/idempotency-store.js'
import type { RunGateway } from '../runs/contract.js'
import { createServiceMetrics, type ServiceMetrics } from './metrics.js'
import authPlugin from './plugins/auth.js'
import configPlugin from './plugins/config.js'
import errorHandlerPlugin from './plugins/error-handler.js'
import etagPlugin from './plugins/etag.js'
import historyPlugin from './plugins/history.js'
import idempotencyPlugin from './plugins/idempotency.js'
import metricsPlugin from './plugins/metrics.js'
import rateLimitPlugin from './plugins/rate-limit.js'
import requestEncodingPlugin from './plugins/request-encoding.js'
import responseEncodingPlugin from './plugins/response-encoding.js'
import swaggerPlugin from './plugins/swagger.js'
import forecastRoutes from './routes/forecast.js'
import syncFitsPlugin from './plugins/sync-fits.js'
import type { SyncFitter } from './sync-fits/pool.js'
import bodyThreadsPlugin from './plugins/body-threads.js'
import { LARGE_JSON_BYTES, LargeJsonBody, type BodyThreads } from './body-threads/pool.js'
import { readBodyBlocks } from './body-threads/read-blocks.js'
import healthRoutes from './routes/health.js'
import historyRoutes from './routes/history.js'
import runRoutes from './routes/runs/index.js'
import resultRoutes from './routes/runs/results.js'
import skuRoutes from './routes/skus/forecast.js'
import publishedRoutes from './routes/forecasts/published.js'
import skuHistoryRoutes from './routes/skus/history.js'
import skuListRoutes from './routes/skus/list.js'
import { validatorCompiler } from './validation.js'
import { toProblem } from './problem-mapping.js'
import { PROBLEM_CONTENT_TYPE } from '../errors.js'
import type { ErpServices } from './erp-services.js'
import erpPlugin from './plugins/erp.js'
import accuracyRoutes from './routes/accuracy.js'
import valueAddedRoutes from './routes/value-added.js'
import tagRoutes from './routes/tags.js'
import worklistRoutes from './routes/worklist.js'
import accessRoutes from './routes/access.js'
import workbenchPlugin from './plugins/workbench.js'
import callbackRoutes from './routes/callbacks.js'
import deliveryRoutes from './routes/runs/deliveries.js'
import scheduleRoutes from './routes/schedules.js'
import skuAccuracyRoutes from './routes/skus/accuracy.js'
import closedPeriodRoutes from './routes/closed-periods.js'
import adjustmentsPlugin from './plugins/adjustments.js'
import skuAdjustmentRoutes from './routes/skus/adjustments.js'
import type { AdjustmentService } from '../runs/adjustment-service.js'
import './types.js'

export interface AppDeps {
  readonly config: Config
  readonly gateway: RunGateway
  /** Default: a silent logger. */
  readonly logger?: Logger
  /** Shared rate-limit counts; without it they stay in this process's memory. */
  readonly rateLimitRedis?: RedisClient
  /** Default: a fresh registry per app. */
  readonly metrics?: ServiceMetrics
  /** Fits POST /v1/forecast's series; default a worker-thread pool the app opens and closes. */
  readonly syncFits?: SyncFitter
  /** Parses large run bodies; default one worker thread the app opens and closes. */
  readonly bodyThreads?: BodyThreads
  /** Stored demand histories; without it the history routes answer 503. */
  readonly histories?: HistoryStore
  /** Idempotency-Key answers; without it a request carrying the header gets 503. */
  readonly idempotency?: IdempotencyStore
  /** Callbacks, deliveries, schedules and accuracy; without them those routes answer 503. */
  readonly erp?: ErpServices
  /** Folder of the built workbench pages served at /app/; without it /app/ answers 503. */
  readonly workbenchRoot?: string | null
  /** Adjustments of SKU forecasts; without them those routes answer 503 and forecasts show none. */
  readonly adjustments?: AdjustmentService
}

/** Time to receive a whole request when the config does not say (REQUEST_TIMEOUT_MS). */
export const DEFAULT_REQUEST_TIMEOUT_MS = 120_000

const CLIENT_REQUEST_ID = /^[A-Za-z0-9._-]{1,64}$/

/**
 * Longest path parameter the router matches, in characters after decoding. Above
 * every id and SKU a route accepts (SKUs: 200), so an over-long one reaches the
 * route's schema and gets a 400 naming the field; the router's default (100)
 * made SKUs of 101-200 characters storable but unreadable by path.
 */
const MAX_PATH_PARAM_CHARS = 1000

/** The HTTP app, ready for inject() or listen(); never listens itself. */
export async function build(deps: AppDeps): Promise<FastifyInstance> {
  const { config } = deps
  const requestTimeoutMs = config.requestTimeoutMs ?? DEFAULT_REQUEST_TIMEOUT_MS
  const app = Fastify({
    loggerInstance: (deps.logger ?? createLogger({ level: 'silent' })) as FastifyBaseLogger,
    bodyLimit: config.bodyLimitBytes,
    routerOptions: { maxParamLength: MAX_PATH_PARAM_CHARS },
    // Slow clients (a trickled body, half-sent headers) get a 408 and are cut off.
    requestTimeout: requestTimeoutMs,
    http: {
      headersTimeout: Math.min(60_000, requestTimeoutMs),
      // Node checks the timeouts this often (its default, 30 s, would let short timeouts overrun).
      connectionsCheckingInterval: Math.max(100, Math.min(30_000, Math.floor(requestTimeoutMs / 4))),
    },
    // Errors fastify raises before routing (a malformed percent-encoding in the URL) are problems too.
    frameworkErrors: (err, _request, reply) => {
      const problem = toProblem(err, { bodyLimitBytes: config.bodyLimitBytes })
      const r = reply as FastifyReply
      r.code(problem.statusCode).type(PROBLEM_CONTENT_TYPE).send(problem.toBody())
    },
    // A client's X-Request-Id is kept when it is short and plain; otherwise a fresh one.
    genReqId: (req) => {
      const given = req.headers['x-request-id']
      return typeof given === 'string' && CLIENT_REQUEST_ID.test(given) ? given : randomUUID()
    },
  })
  app.setValidatorCompiler(validatorCompiler)
  app.setSerializerCompiler(serializerCompiler)
  // Only JSON bodies: anything else is 415 rather than a string the schema rejects.
  app.removeContentTypeParser('text/plain')
  // An empty JSON body counts as no body (some clients send DELETE with a JSON
  // content type and nothing else); routes that need a body reject it by schema.
  const parseJson = app.getDefaultJsonParser('error', 'error')
  app.removeContentTypeParser('application/json')
  app.addContentTypeParser('application/json', (request, payload, done) => {
    readBodyBlocks(request, payload, request.routeOptions.bodyLimit ?? config.bodyLimitBytes).then(
      ({ blocks, length }) => {
        if (length === 0) done(null, undefined)
        // A large body of a route that opts in is parsed on a thread by its handler: parsing tens of
        // megabytes here would hold every other request (and the health probe) for up to a second.
        else if (length >= LARGE_JSON_BYTES && request.routeOptions.config?.largeJsonOnThread === true) done(null, new LargeJsonBody(blocks))
        else void parseJson(request, (blocks.length === 1 ? blocks[0]! : Buffer.concat(blocks, length)).toString('utf8'), done)
      },
      (err: Error) => done(err, undefined),
    )
  })
  app.addHook('onRequest', async (request, reply) => {
    reply.header('x-request-id', request.id)
  })

  await app.register(configPlugin, {
    config,
    gateway: deps.gateway,
    metrics: deps.metrics ?? createServiceMetrics(),
  })
  await app.register(errorHandlerPlugin)
  // Before any plugin that adds routes, so the OpenAPI document sees them all (/metrics too).
  await app.register(swaggerPlugin)
  await app.register(metricsPlugin)
  await app.register(authPlugin, { redis: deps.rateLimitRedis })
  await app.register(rateLimitPlugin, { redis: deps.rateLimitRedis })
  // After auth and the rate limit (onRequest): only a known, counted request's body is decompressed.
  await app.register(requestEncodingPlugin)
  await app.register(historyPlugin, { histories: deps.histories })
  await app.register(idempotencyPlugin, { store: deps.idempotency })
  await app.register(etagPlugin)
  // After the ETag plugin: the tag is computed on the plain body, then the body is compressed.
  await app.register(responseEncodingPlugin)
  await app.register(erpPlugin, { erp: deps.erp })
  await app.register(adjustmentsPlugin, { adjustments: deps.adjustments })

  await app.register(healthRoutes)
  await app.register(syncFitsPlugin, { fitter: deps.syncFits })
  await app.register(bodyThreadsPlugin, { threads: deps.bodyThreads })
  await app.register(forecastRoutes)
  await app.register(runRoutes, { prefix: '/v1/runs' })
  await app.register(resultRoutes, { prefix: '/v1/runs' })
  await app.register(skuRoutes, { prefix: '/v1/skus' })
  await app.register(publishedRoutes, { prefix: '/v1/forecasts' })
  await app.register(skuHistoryRoutes, { prefix: '/v1/skus' })
  await app.register(skuListRoutes, { prefix: '/v1/skus' })
  await app.register(historyRoutes, { prefix: '/v1/history' })
  await app.register(deliveryRoutes, { prefix: '/v1/runs' })
  await app.register(callbackRoutes, { prefix: '/v1/callbacks' })
  await app.register(scheduleRoutes, { prefix: '/v1/schedules' })
  await app.register(skuAccuracyRoutes, { prefix: '/v1/skus' })
  await app.register(skuAdjustmentRoutes, { prefix: '/v1/skus' })
  await app.register(accuracyRoutes)
  await app.register(valueAddedRoutes)
  await app.register(tagRoutes)
  await app.register(worklistRoutes)
  await app.register(closedPeriodRoutes, { prefix: '/v1/closed-periods' })
  await app.register(accessRoutes)
  await app.register(workbenchPlugin, { root: deps.workbenchRoot ?? null })
  return app
}
