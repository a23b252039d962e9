/**
 * Accuracy scoring benchmark: what an upload batch costs in rescoring once
 * every SKU has published forecasts. Seeds N SKUs (default 10,000) with a
 * 36-month history and 12 kept published forecasts of horizon 12 (origins
 * months 24..35), then times AccuracyStore.rescoreMany over all of them in
 * batches of 500 (the history store's upload batch): the first pass adds the
 * records, later passes (the same history sent again) change nothing. Real
 * Redis; invented data, for measuring only. Prints median and range over
 * the repeats in ms per 1,000 SKUs.
 *
 *   REDIS_URL=redis://127.0.0.1:6379 npm run bench:scoring -- 10000
 */
import { randomBytes } from 'node:crypto'
import { Redis } from 'ioredis'
import { formatPeriod, parsePeriod } from '../src/engine/index.js'
import { AccuracyStore, type HistoryEntry } from '../src/storage/erp/accuracy-store.js'
import { ClosingStore } from '../src/storage/erp/closing-store.js'
import { RunStore } from '../src/storage/runs/run-store.js'
import type { PreparedItem } from '../src/storage/items/prepared-item.js'
import { encodePoints } from '../src/storage/items/latest-record.js'
import { deletePrefix } from './e2e-redis.js'

const skuCount = Number(process.argv[2] ?? 10_000)
const REPEATS = 5
const BATCH = 500
const redisUrl = process.env.REDIS_URL ?? 'redis://127.0.0.1:6379'
const prefix = `bench-scoring-${randomBytes(4).toString('hex')}`
const redis = new Redis(redisUrl, { maxRetriesPerRequest: 2 })
const tenant = 'bench'
const first = parsePeriod('2023-01', 'month')

const runs = new RunStore(redis, { prefix, resultTtlSeconds: 3600, recordTtlSeconds: 7200, publishedKept: 12 })
const accuracy = new AccuracyStore(redis, runs, new ClosingStore(redis, prefix), { prefix })
const skus = Array.from({ length: skuCount }, (_, i) => `S-${String(i).padStart(6, '0')}`)
const demand = (i: number) => Array.from({ length: 36 }, (_, t) => 20 + ((i + 3 * t) % 11))
const entries: HistoryEntry[] = skus.map((sku, i) => ({ sku, frequency: 'month', firstPeriod: '2023-01', demand: demand(i) }))

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)]!

async function seed(): Promise<void> {
  for (let origin = 24; origin < 36; origin++) {
    for (let b = 0; b < skus.length; b += BATCH) {
      const items = skus.slice(b, b + BATCH).map((sku, j) => {
        const forecast = Array.from({ length: 12 }, (_, h) => ({ period: formatPeriod(first + origin + h, 'month'), demand: 25 + ((b + j + h) % 5) }))
        const item: PreparedItem = { sku, stored: Buffer.alloc(0), points: encodePoints(forecast), summary: '' }
        return item
      })
      await runs.updateLatest(tenant, `run-${origin}`, 1_000_000 + origin, new Date(), items)
    }
  }
}

async function pass(): Promise<number> {
  const t0 = performance.now()
  for (let b = 0; b < entries.length; b += BATCH) await accuracy.rescoreMany(tenant, entries.slice(b, b + BATCH))
  return ((performance.now() - t0) / skus.length) * 1000
}

try {
  await seed()
  const firstPass = await pass()
  const sample = await accuracy.periods(tenant, skus[0]!)
  const repeats: number[] = []
  for (let r = 0; r < REPEATS; r++) repeats.push(await pass())
  console.log(`${skuCount} SKUs, 36 months, 12 kept published forecasts, ${sample.length} scored periods each`)
  console.log(`first pass (records added): ${firstPass.toFixed(1)} ms per 1,000 SKUs`)
  console.log(
    `unchanged resend: median ${median(repeats).toFixed(1)} ms per 1,000 SKUs ` +
      `(range ${Math.min(...repeats).toFixed(1)}-${Math.max(...repeats).toFixed(1)}, ${REPEATS} passes)`,
  )
} finally {
  await deletePrefix(redis, prefix)
  redis.disconnect()
}
