import { collectDefaultMetrics } from 'prom-client'
import { build } from './http/app.js'
import { createErpServices } from './http/erp-services.js'
import { createAdjustmentService } from './http/adjustment-services.js'
import { defaultWorkbenchRoot } from './http/plugins/workbench.js'
import { createServiceMetrics } from './http/metrics.js'
import { createLogger } from './logger.js'
import { DEFAULT_QUOTA_STORED_BYTES_PER_TENANT } from './config.js'
import { createRunGateway } from './queue/gateway.js'
import { closeSteps, type CloseStep } from './shutdown.js'
import { configAndRedisOrExit, stopOnSignals } from './startup.js'
import { AccuracyTrackingHistoryStore } from './storage/erp/accuracy-hook.js'
import { IdempotencyStore } from './storage/erp/idempotency-store.js'
import { requestConnection } from './storage/redis.js'
import { startProcessWorkers } from './worker-main.js'

/**
 * `npm start`: the HTTP API, plus this process's workers (worker-main.ts)
 * unless RUN_WORKER=false (then run `npm run worker` processes beside it).
 * This process opens the API's resources and closes them, each step even if
 * another fails.
 */
async function main(): Promise<void> {
  const config = await configAndRedisOrExit()
  const logger = createLogger({ level: config.logLevel })
  if (config.apiKeys.size === 0) {
    logger.warn(
      { host: config.host },
      'no API keys configured (API_KEYS / API_KEYS_FILE): every request is tenant "default" without authentication; listening on loopback only',
    )
  }

  const gateway = createRunGateway(config, { logger })
  // One connection for the API's own keys: rate-limit counters, stored histories, idempotency answers, ERP records.
  const apiRedis = requestConnection(config, logger, 'api')
  const erp = createErpServices(config, apiRedis, { logger })
  // Uploads score earlier forecasts against the actuals they bring (GET /v1/skus/{sku}/accuracy).
  // Adjustments of forecasts: uploads also record their value added and expire those whose periods passed.
  const adjustments = createAdjustmentService(config, apiRedis, gateway)
  const histories = new AccuracyTrackingHistoryStore(
    apiRedis,
    { prefix: config.redisPrefix, maxStoredBytes: config.quotaStoredBytesPerTenant ?? DEFAULT_QUOTA_STORED_BYTES_PER_TENANT },
    erp.services.accuracy,
    (err, tenant) => logger.warn({ err, tenant }, 'could not score actuals against the latest forecast'),
    (tenant, entries) => adjustments.historiesStored(tenant, entries),
  )
  const idempotency = new IdempotencyStore(apiRedis, { prefix: config.redisPrefix })
  const metrics = createServiceMetrics()
  collectDefaultMetrics({ register: metrics.registry, prefix: 'almanac_process_' })

  const app = await build({
    config, gateway, logger, rateLimitRedis: apiRedis, metrics, histories, idempotency, erp: erp.services, adjustments,
    workbenchRoot: defaultWorkbenchRoot(),
  })
  const workers = config.runWorker ? startProcessWorkers(config, logger) : null

  const steps: CloseStep[] = [
    ['HTTP server', () => app.close()],
    ...(workers ? [['workers', () => workers.close()] as const] : []),
    ['run gateway', () => gateway.close()],
    ['ERP services', () => erp.close()],
    ['Redis connection api', () => apiRedis.quit()],
  ]
  stopOnSignals(logger, 'finishing in-flight requests and jobs', () => closeSteps(logger, steps))

  try {
    await app.listen({ port: config.port, host: config.host })
  } catch (err) {
    logger.fatal({ err }, 'could not listen')
    process.exit(1)
  }
  logger.info({ host: config.host, port: config.port, worker: workers !== null }, 'almanac API listening')
}

void main()
