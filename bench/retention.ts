/**
 * Idle-history retention benchmark: what a sweep costs at a tenant's full
 * size. Seeds N SKUs (default 100,000) of 24 months each, with a latest
 * forecast (12 months) for every SKU, all written on one fake day. Then times
 * three sweeps (sweepIdleHistories, the worker's work without BullMQ):
 * the first sweep after an upgrade (the last-write index emptied, so it is
 * backfilled and nothing is removed), a sweep with nothing to do (repeated),
 * and the sweep that finds every SKU idle and removes it with its records.
 * Real Redis; invented data, for measuring only.
 *
 *   REDIS_URL=redis://127.0.0.1:6379 npm run bench:retention -- 100000
 */
import { randomBytes } from 'node:crypto'
import { Redis } from 'ioredis'
import { loadConfig } from '../src/config.js'
import { formatPeriod, parsePeriod } from '../src/engine/index.js'
import { MS_PER_DAY, sweepIdleHistories } from '../src/retention/sweep.js'
import { retentionDeps } from '../src/retention/worker.js'
import { HistoryStore, historyKeys } from '../src/storage/histories/history-store.js'
import { encodePoints } from '../src/storage/items/latest-record.js'
import type { PreparedItem } from '../src/storage/items/prepared-item.js'
import { RunStore, runStoreOptions } from '../src/storage/runs/run-store.js'
import { deletePrefix, usedMemory } from './e2e-redis.js'

const skuCount = Number(process.argv[2] ?? 100_000)
const REPEATS = 20
const BATCH = 500
const redisUrl = process.env.REDIS_URL ?? 'redis://127.0.0.1:6379'
const prefix = `bench-retention-${randomBytes(4).toString('hex')}`
const redis = new Redis(redisUrl, { maxRetriesPerRequest: 2 })
const tenant = 'default'
const config = loadConfig({ REDIS_PREFIX: prefix }, { readFile: () => '', hash: (k) => k })
const T0 = Date.UTC(2026, 0, 5)

const histories = new HistoryStore(redis, { prefix, now: () => new Date(T0) })
const runs = new RunStore(redis, runStoreOptions(config))
const deps = retentionDeps(config, redis)
const skus = Array.from({ length: skuCount }, (_, i) => `S-${String(i).padStart(6, '0')}`)
const first = parsePeriod('2026-01', 'month')
const points = encodePoints(Array.from({ length: 12 }, (_, h) => ({ period: formatPeriod(first + h, 'month'), demand: 100 })))

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)]!
const sweep = (nowMs: number) => sweepIdleHistories(deps, [tenant], { idleDays: 30, nowMs })

async function timed<T>(f: () => Promise<T>): Promise<[T, number]> {
  const t0 = performance.now()
  const v = await f()
  return [v, performance.now() - t0]
}

try {
  for (let b = 0; b < skus.length; b += BATCH) {
    const part = skus.slice(b, b + BATCH)
    await histories.apply(
      tenant,
      part.map((sku) => ({ sku, incoming: { frequency: 'month', startOrdinal: 0, demand: [] }, rows: 0, origin: {} })),
      () => ({ data: { frequency: 'month', firstPeriod: '2024-01', demand: Array.from({ length: 24 }, (_, i) => 90 + (i % 12)), tags: ['category:garden'] } }),
      { readValues: false },
    )
    const items: PreparedItem[] = part.map((sku) => ({ sku, stored: Buffer.alloc(0), points, summary: '' }))
    await runs.updateLatest(tenant, 'run-1', T0, new Date(T0), items)
  }
  const k = historyKeys(prefix, tenant)
  const memory = await usedMemory(redis)
  console.log(`${skuCount} SKUs seeded (24 months, a latest forecast each); stored bytes ${await histories.storedBytes(tenant)}`)
  console.log(`last-write index: ${await redis.memory('USAGE', k.written)} bytes (MEMORY USAGE)`)

  await redis.del(k.written, k.writtenBackfill)
  const [backfill, backfillMs] = await timed(() => sweep(T0 + MS_PER_DAY))
  console.log(`first sweep after an upgrade (backfill, nothing removed): ${backfillMs.toFixed(0)} ms, ${backfill.rounds} rounds, removed ${backfill.removed.get(tenant) ?? 0}`)

  const idle: number[] = []
  for (let r = 0; r < REPEATS; r++) idle.push((await timed(() => sweep(T0 + 2 * MS_PER_DAY)))[1])
  console.log(`sweep with nothing to do: median ${median(idle).toFixed(2)} ms (range ${Math.min(...idle).toFixed(2)}-${Math.max(...idle).toFixed(2)}, ${REPEATS} sweeps)`)

  const [removal, removalMs] = await timed(() => sweep(T0 + 40 * MS_PER_DAY))
  const removed = removal.removed.get(tenant) ?? 0
  console.log(`sweep removing every SKU: ${removalMs.toFixed(0)} ms for ${removed} SKUs, ${((removalMs / removed) * 1000).toFixed(0)} ms per 1,000, ${removal.rounds} rounds`)
  console.log(`left: ${await histories.count(tenant)} SKUs, ${await histories.storedBytes(tenant)} stored bytes, ${await redis.hlen(`${prefix}:t:${tenant}:latest`)} latest records; Redis used memory ${memory} -> ${await usedMemory(redis)} bytes`)
} finally {
  await deletePrefix(redis, prefix)
  redis.disconnect()
}
