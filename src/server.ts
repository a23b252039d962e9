import { createHash } from 'node:crypto'
import { readFileSync } from 'node:fs'
import { collectDefaultMetrics } from 'prom-client'
import { ConfigError, loadConfig, type Config } from './config.js'
import { build } from './http/app.js'
import { createServiceMetrics } from './http/metrics.js'
import { createLogger } from './logger.js'
import { assertRedisReachable, gatewayConnection } from './queue/connection.js'
import { createRunGateway } from './queue/gateway.js'
import { startWorkers, type RunWorkers } from './queue/worker.js'
import { AccuracyTrackingHistoryStore } from './storage/accuracy-hook.js'
import { createErpServices } from './callbacks/services.js'
import { IdempotencyStore } from './storage/idempotency-store.js'

/**
 * `npm start`: the HTTP API, plus in-process chunk workers unless
 * RUN_WORKER=false (then run `npm run worker` processes beside it).
 * The only file besides worker-main.ts that listens or starts anything.
 */
function configFromEnv(): Config {
  try {
    return loadConfig(process.env, {
      readFile: (path) => readFileSync(path, 'utf8'),
      hash: (key) => createHash('sha256').update(key, 'utf8').digest('hex'),
    })
  } catch (err) {
    if (err instanceof ConfigError) {
      process.stderr.write(`${err.message}\n`)
      process.exit(1)
    }
    throw err
  }
}

async function main(): Promise<void> {
  const config = configFromEnv()
  try {
    await assertRedisReachable(config)
  } catch (err) {
    process.stderr.write(`${(err as Error).message}\n`)
    process.exit(1)
  }

  const logger = createLogger({ level: config.logLevel })
  if (config.apiKeys.size === 0) {
    logger.warn(
      { host: config.host },
      'no API keys configured (API_KEYS / API_KEYS_FILE): every request is tenant "default" without authentication; listening on loopback only',
    )
  }

  const gateway = createRunGateway(config)
  // One connection for the API's own keys: rate-limit counters, stored histories, idempotency answers.
  const apiRedis = gatewayConnection(config)
  apiRedis.on('error', (err) => logger.warn({ err }, 'API Redis connection error'))
  const erp = createErpServices(config, apiRedis)
  // Uploads score earlier forecasts against the actuals they bring (GET /v1/skus/{sku}/accuracy).
  const histories = new AccuracyTrackingHistoryStore(apiRedis, { prefix: config.redisPrefix }, erp.services.accuracy, (err, tenant) =>
    logger.warn({ err, tenant }, 'could not score actuals against the latest forecast'),
  )
  const idempotency = new IdempotencyStore(apiRedis, { prefix: config.redisPrefix })
  const metrics = createServiceMetrics()
  collectDefaultMetrics({ register: metrics.registry, prefix: 'almanac_process_' })

  const app = await build({ config, gateway, logger, rateLimitRedis: apiRedis, metrics, histories, idempotency, erp: erp.services })
  const workers: RunWorkers | null = config.runWorker ? startWorkers(config, logger) : null

  let stopping = false
  const stop = (signal: string) => {
    if (stopping) return
    stopping = true
    logger.info({ signal }, 'shutting down: finishing in-flight requests and chunks')
    const closeAll = async () => {
      await app.close()
      await workers?.close()
      await gateway.close()
      await erp.close()
      await apiRedis.quit().catch(() => undefined)
    }
    closeAll()
      .then(() => process.exit(0))
      .catch((err) => {
        logger.error({ err }, 'shutdown failed')
        process.exit(1)
      })
  }
  process.on('SIGTERM', () => stop('SIGTERM'))
  process.on('SIGINT', () => stop('SIGINT'))

  try {
    await app.listen({ port: config.port, host: config.host })
  } catch (err) {
    logger.fatal({ err }, 'could not listen')
    process.exit(1)
  }
  logger.info({ host: config.host, port: config.port, worker: workers !== null }, 'almanac API listening')
}

void main()
