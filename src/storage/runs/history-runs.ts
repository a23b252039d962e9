import type { RedisClient } from '../redis.js'
import type { RunScope, RunSettings, SeriesItem } from '../../schemas/run.js'
import { decodeRunRecord, newRunFields } from './run-hash.js'
import { RunStats } from './stats-store.js'
import type { HistoryStore } from '../histories/history-store.js'
import { runKeys } from '../keys.js'
import type { RunStoreOptions } from './run-store.js'
import type { RunRecord } from '../../runs/contract.js'

/**
 * Create a run over stored histories: the scope is read page by page
 * (at most `chunkSize` histories at a time) and each full chunk is written as
 * a chunk input at once, so memory holds one chunk, never the whole
 * scope. The run record goes last, when the total is known; inputs of a
 * run that never got its record expire with the result TTL.
 * Each stored history becomes the series `{ sku, firstPeriod, demand, frequency }`,
 * exactly as if it had been sent inline. SKUs of `scope.skus` without a stored
 * history are skipped and counted (`missingSkus`).
 * Null when nothing matched (no run is created).
 */
export async function createRunFromHistories(
  redis: RedisClient,
  opts: RunStoreOptions,
  histories: HistoryStore,
  args: {
    readonly tenant: string
    readonly runId: string
    readonly settings: RunSettings
    readonly scope: RunScope
    readonly chunkSize: number
    readonly now: Date
  },
): Promise<{ record: RunRecord; chunks: number; missingSkus: number } | null> {
  const { tenant, runId, settings, scope, chunkSize } = args
  const k = runKeys(opts.prefix, tenant, runId)
  let chunks = 0
  let total = 0
  let chunk: SeriesItem[] = []
  const flush = async () => {
    await redis.set(k.input(chunks), JSON.stringify(chunk), 'EX', opts.resultTtlSeconds)
    chunks++
    total += chunk.length
    chunk = []
  }
  for await (const batch of histories.select(tenant, scope, chunkSize)) {
    for (const h of batch) {
      chunk.push({
        sku: h.sku,
        firstPeriod: h.firstPeriod,
        demand: [...h.demand],
        frequency: h.frequency,
        ...(h.replenishment === undefined ? {} : { replenishment: h.replenishment }),
      })
      if (chunk.length >= chunkSize) await flush()
    }
  }
  if (chunk.length > 0) await flush()
  if (total === 0) return null
  const fields = newRunFields({ id: runId, tenant, createdAt: args.now.toISOString(), total, chunks, settings, scope })
  const results = await redis.multi().hset(k.run, fields).expire(k.run, opts.recordTtlSeconds).exec()
  for (const [err] of results ?? []) if (err) throw err
  await new RunStats(redis, opts.prefix).created()
  return { record: decodeRunRecord(fields)!, chunks, missingSkus: 'skus' in scope ? scope.skus.length - total : 0 }
}
