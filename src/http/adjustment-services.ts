import type { Config } from '../config.js'
import type { RedisClient } from '../storage/redis.js'
import type { RunGateway } from '../runs/contract.js'
import { AdjustmentService } from '../runs/adjustment-service.js'
import { AdjustmentStore } from '../storage/adjustments/adjustment-store.js'
import { ValueAddedStore } from '../storage/adjustments/value-added-store.js'
import { HistoryStore } from '../storage/histories/history-store.js'
import { RunStore, runStoreOptions } from '../storage/runs/run-store.js'

/** The adjustment service over one Redis connection: its own stores, and the run and history stores it reads. */
export function createAdjustmentService(config: Config, redis: RedisClient, gateway: Pick<RunGateway, 'latestForecast'>): AdjustmentService {
  const prefix = config.redisPrefix
  const runs = new RunStore(redis, runStoreOptions(config))
  const histories = new HistoryStore(redis, { prefix })
  return new AdjustmentService({
    store: new AdjustmentStore(redis, { prefix }),
    valueAdded: new ValueAddedStore(redis, { prefix }),
    latestForecast: (tenant, sku) => gateway.latestForecast(tenant, sku),
    latestPoints: (tenant, skus) => runs.latestPoints(tenant, skus),
    history: (tenant, sku) => histories.get(tenant, sku),
  })
}
