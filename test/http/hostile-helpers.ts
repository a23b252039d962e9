import { expect } from 'vitest'
import type { FastifyInstance, InjectOptions, LightMyRequestResponse } from 'fastify'
import { Redis } from 'ioredis'
import { build } from '../../src/http/app.js'
import { createLogger } from '../../src/logger.js'
import { createRunGateway, type RunMachinery } from '../../src/queue/gateway.js'
import { HistoryStore } from '../../src/storage/histories/history-store.js'
import { IdempotencyStore } from '../../src/storage/erp/idempotency-store.js'
import { createErpServices } from '../../src/http/erp-services.js'
import type { Config } from '../../src/config.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../helpers/redis.js'
import { testConfig } from './gateway-double.js'

/**
 * The whole app over real Redis stores (run gateway without workers,
 * histories, idempotency, callbacks, schedules, accuracy), so every route
 * answers for real, plus checks shared by the hostile-input tests.
 */
export interface HostileApp {
  readonly app: FastifyInstance
  readonly gateway: RunMachinery
  readonly lines: string[]
  /** The Redis the app uses, and its key prefix. */
  readonly url: string
  readonly prefix: string
  close(): Promise<void>
}

export async function buildHostileApp(name: string, overrides: Partial<Config> = {}): Promise<HostileApp> {
  const url = await redisUrlForTests()
  const prefix = uniquePrefix(name)
  const config = testConfig({ redisUrl: url, redisPrefix: prefix, chunkSize: 5000, ...overrides })
  const redis = new Redis(url, { maxRetriesPerRequest: 2 })
  const lines: string[] = []
  const logger = createLogger({ level: 'info', destination: { write: (s: string) => void lines.push(s) } })
  const gateway = createRunGateway(config, { logger: createLogger({ level: 'silent' }) })
  const erp = createErpServices(config, redis, { logger: createLogger({ level: 'silent' }) })
  const app = await build({
    config,
    gateway,
    logger,
    rateLimitRedis: redis,
    histories: new HistoryStore(redis, { prefix, maxStoredBytes: config.quotaStoredBytesPerTenant ?? 0 }),
    idempotency: new IdempotencyStore(redis, { prefix }),
    erp: erp.services,
  })
  return {
    app,
    gateway,
    lines,
    url,
    prefix,
    async close() {
      await app.close()
      await erp.close()
      await gateway.close()
      redis.disconnect()
      await deleteKeys(url, prefix)
    },
  }
}

/** inject() that fails instead of hanging when the app never answers. */
export async function injectWithin(
  app: FastifyInstance,
  opts: InjectOptions,
  timeoutMs = 20_000,
): Promise<LightMyRequestResponse> {
  let timer: NodeJS.Timeout | undefined
  const hung = new Promise<never>((_, reject) => {
    timer = setTimeout(() => reject(new Error(`no answer within ${timeoutMs} ms: ${JSON.stringify(opts).slice(0, 200)}`)), timeoutMs)
  })
  try {
    return await Promise.race([app.inject(opts), hung])
  } finally {
    clearTimeout(timer)
  }
}

/**
 * The contract for any input: a 2xx, or a 4xx problem+json whose status
 * matches; never a 5xx, never a stack trace.
 */
export function expectWellFormed(res: LightMyRequestResponse, what: string): void {
  const status = res.statusCode
  const context = `${what} -> ${status} ${res.body.slice(0, 300)}`
  expect(status >= 200 && status < 500, context).toBe(true)
  expect(status < 300 || status >= 400, context).toBe(true)
  expect(res.body, context).not.toMatch(/\n\s+at .+:\d+:\d+/)
  if (status >= 400) {
    expect(res.headers['content-type'], context).toMatch(/^application\/problem\+json/)
    const body = res.json()
    expect(body.status, context).toBe(status)
    expect(body.type, context).toMatch(/^https:\/\/almanac\.example\/problems\//)
  }
}

/** Keys every object inherits; checked before and after to catch prototype pollution. */
export function prototypeSnapshot(): string[] {
  return [Object.prototype, Array.prototype, Function.prototype].flatMap((p) => Object.getOwnPropertyNames(p)).sort()
}
