import type { FastifyInstance } from 'fastify'
import { Redis } from 'ioredis'
import type { Config } from '../../src/config.js'
import { build, type AppDeps } from '../../src/http/app.js'
import { createLogger } from '../../src/logger.js'
import { createRunGateway, type RunMachinery } from '../../src/queue/gateway.js'
import { startProcessWorkers, type ProcessWorkers } from '../../src/worker-main.js'
import { createErpServices } from '../../src/http/erp-services.js'
import { createAdjustmentService } from '../../src/http/adjustment-services.js'
import { AccuracyTrackingHistoryStore } from '../../src/storage/erp/accuracy-hook.js'
import { RunStore, runStoreOptions } from '../../src/storage/runs/run-store.js'
import { runsTestConfig } from '../queue/fixtures.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from './redis.js'

/**
 * The whole service in one test process for integration tests: the real app,
 * run gateway and chunk workers against the test Redis, under a key prefix of
 * their own.
 *
 *   let service: TestService
 *   beforeAll(async () => { service = await startService('erp-history', { config: { chunkSize: 4 } }) })
 *   afterAll(() => service?.close())
 */

export type ErpMachinery = ReturnType<typeof createErpServices>

/** What is ready before the app is built, for `appDeps`. */
export interface ServiceContext {
  readonly url: string
  readonly prefix: string
  readonly config: Config
  /** A plain connection (maxRetriesPerRequest 2) for stores, rate limits and direct checks. */
  readonly redis: Redis
  /** Set when started with `erp: true`. */
  readonly erp: ErpMachinery | undefined
}

export interface TestService extends ServiceContext {
  readonly app: FastifyInstance
  readonly gateway: RunMachinery
  readonly workers: ProcessWorkers
  /** Closes everything it started and deletes the prefix's keys. */
  close(): Promise<void>
}

export interface ServiceOptions {
  /** Overrides of `runsTestConfig`. */
  readonly config?: Partial<Config>
  /** Also start the callbacks, deliveries, schedules and accuracy services (passed to the app). */
  readonly erp?: boolean
  /** Further app dependencies (histories, idempotency, rate limits...). */
  readonly appDeps?: (ctx: ServiceContext) => Partial<AppDeps>
}

/** Starts the service under `uniquePrefix(name)`; if any part fails to start, what did start is closed. */
export async function startService(name: string, options: ServiceOptions = {}): Promise<TestService> {
  const url = await redisUrlForTests()
  const prefix = uniquePrefix(name)
  const config = runsTestConfig(url, prefix, options.config)
  const logger = createLogger({ level: 'silent' })
  let app: FastifyInstance | undefined
  let gateway: RunMachinery | undefined
  let workers: ProcessWorkers | undefined
  let erp: ErpMachinery | undefined
  let redis: Redis | undefined

  const close = async () => {
    await app?.close()
    await workers?.close()
    await gateway?.close()
    await erp?.close()
    redis?.disconnect()
    await deleteKeys(url, prefix)
  }

  try {
    redis = new Redis(url, { maxRetriesPerRequest: 2 })
    gateway = createRunGateway(config, { logger })
    workers = startProcessWorkers(config, logger)
    if (options.erp) erp = createErpServices(config, redis, { logger })
    const ctx: ServiceContext = { url, prefix, config, redis, erp }
    app = await build({
      config,
      gateway,
      logger,
      ...(erp ? { erp: erp.services } : {}),
      ...options.appDeps?.(ctx),
    })
    return { ...ctx, app, gateway, workers, close }
  } catch (err) {
    await close().catch(() => undefined)
    throw err
  }
}

/**
 * App dependencies as production wires them (server.ts) for a service started with
 * `erp: true`: stored histories whose uploads score the published forecasts and record
 * forecast value added, and the adjustment service over the run store's latest forecasts.
 * Errors of the scoring hook go to `onError`.
 */
export function planningDeps(ctx: ServiceContext, onError: (err: unknown) => void): Partial<AppDeps> {
  if (!ctx.erp) throw new Error('planningDeps needs a service started with erp: true')
  const runs = new RunStore(ctx.redis, runStoreOptions(ctx.config))
  const adjustments = createAdjustmentService(ctx.config, ctx.redis, { latestForecast: (t, s) => runs.latest(t, s) })
  const histories = new AccuracyTrackingHistoryStore(ctx.redis, { prefix: ctx.prefix }, ctx.erp.services.accuracy, onError, (tenant, entries) =>
    adjustments.historiesStored(tenant, entries),
  )
  return { adjustments, histories }
}
