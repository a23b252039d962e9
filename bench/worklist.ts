/**
 * Worklist benchmark: what the worklist costs a publishing run, and how fast it
 * pages at a tenant's full size. Seeds N SKUs (default 100,000) with a previous
 * published forecast (12 months), then publishes a new one for each in chunks of
 * 500 and times recordWorklist (read the kept forecasts, decide, record) per
 * 1,000 SKUs; about 10 % of the SKUs are short, 2 % failed and a share moved by
 * 30 %. Then times WorklistService.list (first page, a page deep in the list by
 * cursor, one kind) and counts, each repeated. Real Redis; invented data, for
 * measuring only. Biased SKUs come from accuracy scoring (bench:scoring) and are
 * not seeded here.
 *
 *   REDIS_URL=redis://127.0.0.1:6379 npm run bench:worklist -- 100000
 */
import { randomBytes } from 'node:crypto'
import { Redis } from 'ioredis'
import { formatPeriod, parsePeriod } from '../src/engine/index.js'
import { AccuracyStore } from '../src/storage/erp/accuracy-store.js'
import { ClosingStore } from '../src/storage/erp/closing-store.js'
import { RunStore } from '../src/storage/runs/run-store.js'
import type { PreparedItem } from '../src/storage/items/prepared-item.js'
import { encodePoints } from '../src/storage/items/latest-record.js'
import { recordWorklist, WorklistService } from '../src/runs/worklist-service.js'
import type { WorklistSignals } from '../src/runs/worklist.js'
import { deletePrefix } from './e2e-redis.js'

const skuCount = Number(process.argv[2] ?? 100_000)
const REPEATS = 20
const CHUNK = 500
const redisUrl = process.env.REDIS_URL ?? 'redis://127.0.0.1:6379'
const prefix = `bench-worklist-${randomBytes(4).toString('hex')}`
const redis = new Redis(redisUrl, { maxRetriesPerRequest: 2 })
const tenant = 'bench'
const first = parsePeriod('2026-01', 'month')

const runs = new RunStore(redis, { prefix, resultTtlSeconds: 3600, recordTtlSeconds: 7200, publishedKept: 12 })
const accuracy = new AccuracyStore(redis, runs, new ClosingStore(redis, prefix), { prefix })
const service = new WorklistService({ worklist: runs.worklist, accuracy, runs })
const skus = Array.from({ length: skuCount }, (_, i) => `S-${String(i).padStart(6, '0')}`)

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)]!
const points = (level: number) => encodePoints(Array.from({ length: 12 }, (_, h) => ({ period: formatPeriod(first + h, 'month'), demand: level })))
const signals = (sku: string, i: number): WorklistSignals =>
  i % 50 === 7
    ? { sku, failure: { code: 'empty-series', message: 'demand holds no known (non-null) period' }, shortHistory: null }
    : { sku, failure: null, shortHistory: i % 10 === 3 ? 6 : null }

async function publish(runId: string, createdAtMs: number, level: (i: number) => number): Promise<number[]> {
  const perThousand: number[] = []
  for (let b = 0; b < skus.length; b += CHUNK) {
    const part = skus.slice(b, b + CHUNK)
    const sig = part.map((sku, j) => signals(sku, b + j))
    const items: PreparedItem[] = part.map((sku, j) => ({ sku, stored: Buffer.alloc(0), points: sig[j]!.failure ? null : points(level(b + j)), summary: '' }))
    await runs.updateLatest(tenant, runId, createdAtMs, new Date(), items)
    const t0 = performance.now()
    await recordWorklist({ runs, worklist: runs.worklist }, tenant, runId, createdAtMs, sig, runs.worklistChangePercent)
    perThousand.push(((performance.now() - t0) / part.length) * 1000)
  }
  return perThousand
}

async function time(what: string, f: () => Promise<unknown>): Promise<void> {
  const ms: number[] = []
  for (let r = 0; r < REPEATS; r++) {
    const t0 = performance.now()
    await f()
    ms.push(performance.now() - t0)
  }
  console.log(`${what}: median ${median(ms).toFixed(2)} ms (range ${Math.min(...ms).toFixed(2)}-${Math.max(...ms).toFixed(2)}, ${REPEATS} calls)`)
}

try {
  await publish('run-1', 1_000, () => 100)
  const record = await publish('run-2', 2_000, (i) => (i % 7 === 0 ? 130 : 105))
  const counts = await service.counts(tenant)
  console.log(`${skuCount} SKUs, 12-month forecasts; on the list: ${JSON.stringify(counts)}`)
  console.log(`recordWorklist: median ${median(record).toFixed(1)} ms per 1,000 SKUs (range ${Math.min(...record).toFixed(1)}-${Math.max(...record).toFixed(1)}, chunks of ${CHUNK})`)
  const deep = await service.list(tenant, { limit: 100, includeSnoozed: false, cursor: undefined })
  let cursor = deep.nextCursor
  for (let p = 0; p < 100 && cursor !== null; p++) cursor = (await service.list(tenant, { limit: 100, includeSnoozed: false, cursor })).nextCursor
  await time('first page (100, every kind)', () => service.list(tenant, { limit: 100, includeSnoozed: false }))
  if (cursor !== null) await time('page 102 by cursor (100, every kind)', () => service.list(tenant, { limit: 100, includeSnoozed: false, cursor }))
  await time('first page (100, kind=failed)', () => service.list(tenant, { kind: 'failed', limit: 100, includeSnoozed: false }))
  await time('first page (1000, every kind)', () => service.list(tenant, { limit: 1000, includeSnoozed: false }))
  await time('counts', () => service.counts(tenant))
} finally {
  await deletePrefix(redis, prefix)
  redis.disconnect()
}
