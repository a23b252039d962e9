import type { FastifyInstance } from 'fastify'
import { Redis } from 'ioredis'
import { build } from '../../src/http/app.js'
import { HistoryStore } from '../../src/storage/histories/history-store.js'
import { IdempotencyStore } from '../../src/storage/erp/idempotency-store.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../helpers/redis.js'
import { InMemoryGatewayDouble, testConfig } from './gateway-double.js'
import type { Config } from '../../src/config.js'

/** The app with a run-gateway double and real Redis stores for histories and idempotency keys. */
export interface HistoryApp {
  readonly app: FastifyInstance
  readonly gateway: InMemoryGatewayDouble
  readonly histories: HistoryStore
  readonly redis: Redis
  close(): Promise<void>
}

export async function buildHistoryApp(name: string, overrides: Partial<Config> = {}): Promise<HistoryApp> {
  const url = await redisUrlForTests()
  const prefix = uniquePrefix(name)
  const redis = new Redis(url, { maxRetriesPerRequest: 2 })
  const histories = new HistoryStore(redis, { prefix })
  const idempotency = new IdempotencyStore(redis, { prefix })
  const gateway = new InMemoryGatewayDouble()
  const app = await build({ config: testConfig({ redisPrefix: prefix, ...overrides }), gateway, histories, idempotency })
  return {
    app,
    gateway,
    histories,
    redis,
    async close() {
      await app.close()
      redis.disconnect()
      await deleteKeys(url, prefix)
    },
  }
}
