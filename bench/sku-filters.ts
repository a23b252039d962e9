/**
 * npm run bench:sku-filters: the SKU list's filters at 100,000 stored SKUs (issue 15:
 * "the SKU list answers a filter within 300 ms at 100,000 stored SKUs").
 *
 * Stores SKU_COUNT histories of the invented distributor (garden, heating and
 * workwear SKUs, one tag each) and a published summary for each (written through
 * the store as a publishing chunk would: no series is fitted), with a seeded mix
 * of models, warnings, failures, holdout errors and exception-list entries. Then
 * times GET /v1/skus for each filter through the real app (fastify, listening on
 * loopback, fetch), QUERIES requests each, and prints the median and p95, the
 * items on the page and whether a cursor came back. Record the figures in
 * bench/RESULTS.md ("SKU list filters").
 *
 * Options: --skus=100000 --queries=20. Needs Redis (REDIS_URL, default
 * redis://127.0.0.1:6379); uses a fresh key prefix and deletes it afterwards.
 */
import { createHash, randomBytes } from 'node:crypto'
import { Redis } from 'ioredis'
import { loadConfig } from '../src/config.js'
import { build } from '../src/http/app.js'
import { createLogger } from '../src/logger.js'
import { createRunGateway } from '../src/queue/gateway.js'
import type { ModelName } from '../src/engine/index.js'
import { HistoryStore } from '../src/storage/histories/history-store.js'
import { exceptionsKey } from '../src/storage/keys.js'
import { SkuSummaryStore } from '../src/storage/skus/sku-summary-store.js'
import { summaryTail } from '../src/storage/skus/summary-record.js'

const args = new Map(process.argv.slice(2).map((a) => a.replace(/^--/, '').split('=') as [string, string]))
const SKU_COUNT = Number(args.get('skus') ?? 100_000)
const QUERIES = Number(args.get('queries') ?? 20)
const TARGET_MS = 300
const TENANT = 'default'
const prefix = `bench-sku-filters-${randomBytes(4).toString('hex')}`
const redisUrl = process.env.REDIS_URL ?? 'redis://127.0.0.1:6379'

let seed = 20_261_205
const random = () => (seed = (seed * 48271) % 2147483647) / 2147483647
const quantile = (xs: readonly number[], q: number) => {
  const s = [...xs].sort((a, b) => a - b)
  return s[Math.min(s.length - 1, Math.ceil(q * s.length) - 1)]!
}

// A seeded mix: common models and rare ones, so both broad and narrow filters are timed.
const MODEL_MIX: [ModelName, number][] = [
  ['level-smoothing', 0.3],
  ['theta', 0.2],
  ['trend-smoothing-additive-season', 0.15],
  ['croston', 0.12],
  ['damped-trend-smoothing', 0.1],
  ['linear-trend', 0.08],
  ['moving-average', 0.045],
  ['auto-arima', 0.005],
]
function pickModel(): ModelName {
  let u = random()
  for (const [m, w] of MODEL_MIX) if ((u -= w) < 0) return m
  return 'level-smoothing'
}

const redis = new Redis(redisUrl, { maxRetriesPerRequest: 2 })
const config = loadConfig(
  { REDIS_URL: redisUrl, REDIS_PREFIX: prefix, RUN_WORKER: 'false', RATE_LIMIT_MAX: '1000000', LOG_LEVEL: 'silent' },
  { readFile: () => '', hash: (k) => createHash('sha256').update(k).digest('hex') },
)
const logger = createLogger({ level: 'silent' })
const histories = new HistoryStore(redis, { prefix })
const summaries = new SkuSummaryStore(redis, { prefix })
const gateway = createRunGateway(config, { logger })
const app = await build({ config, gateway, logger, rateLimitRedis: redis, histories })
const baseUrl = await app.listen({ port: 0, host: '127.0.0.1' })

try {
  // 1. Store the SKUs: histories, then one summary each, in chunk-sized batches.
  const lines = ['garden', 'heating', 'workwear'] as const
  const codes = { garden: 'GRD', heating: 'HTG', workwear: 'WRK' } as const
  const started = performance.now()
  const BATCH = 2000
  let failedCount = 0
  const exceptions: string[] = []
  for (let start = 0; start < SKU_COUNT; start += BATCH) {
    const skus: string[] = []
    const tags: string[] = []
    for (let i = start; i < Math.min(SKU_COUNT, start + BATCH); i++) {
      const line = lines[i % 3]!
      skus.push(`${codes[line]}-${String(100_000 + i)}`)
      tags.push(`category:${line}`)
    }
    await histories.apply(
      TENANT,
      skus.map((sku, j) => ({ sku, incoming: { frequency: 'month', startOrdinal: 0, demand: [], tags: [tags[j]!] }, rows: 12, origin: {} })),
      (_current, p) => ({ data: { frequency: 'month', firstPeriod: '2024-01', demand: [3, 5, 4, 6, 5, 7, 6, 8, 7, 9, 8, 10], tags: p.incoming.tags ?? [] } }),
      { readValues: false },
    )
    const items = skus.map((sku) => {
      if (random() < 0.005) {
        failedCount++
        return { sku, summary: summaryTail({ model: null, warnings: [], failed: true, error: null }) }
      }
      const model = pickModel()
      const warnings = [
        ...(model === 'croston' || random() < 0.02 ? ['intermittent-demand'] : []),
        ...(random() < 0.01 ? ['no-intervals'] : []),
        ...(random() < 0.05 ? ['short-history'] : []),
      ]
      if (random() < 0.02) exceptions.push(sku)
      const u = random()
      return { sku, summary: summaryTail({ model, warnings, failed: false, error: { measure: 'mase', value: Number((0.3 + 2.2 * u * u).toFixed(4)) } }) }
    })
    for (let c = 0; c < items.length; c += 500) await summaries.publish(TENANT, 'bench-run-1', Date.now(), items.slice(c, c + 500))
  }
  for (let i = 0; i < exceptions.length; i += 1000) {
    await redis.zadd(exceptionsKey(prefix, TENANT), ...exceptions.slice(i, i + 1000).flatMap((s) => [0, s]))
  }
  process.stdout.write(
    `stored ${SKU_COUNT.toLocaleString('en')} SKUs with summaries (${failedCount} failed, ${exceptions.length} on the exception list) ` +
      `in ${((performance.now() - started) / 1000).toFixed(1)} s\n`,
  )

  // Memory of the summaries and their index sets (what publishing adds per SKU).
  let summaryBytes = 0
  let scan = '0'
  do {
    const [next, keys] = await redis.scan(scan, 'MATCH', `${summaries.keys(TENANT).base}:*`, 'COUNT', 1000)
    scan = next
    for (const key of keys) summaryBytes += Number(await redis.call('MEMORY', 'USAGE', key, 'SAMPLES', '0'))
  } while (scan !== '0')
  process.stdout.write(`summaries and index sets: ${(summaryBytes / SKU_COUNT).toFixed(0)} B per SKU (MEMORY USAGE)\n`)

  // 2. Time each filter.
  const get = async (q: string) => {
    const r = await fetch(`${baseUrl}/v1/skus?${q}`)
    if (r.status !== 200) throw new Error(`GET /v1/skus?${q}: ${r.status} ${(await r.text()).slice(0, 300)}`)
    return (await r.json()) as { items: unknown[]; nextCursor: string | null }
  }
  const deep = (await get('model=level-smoothing&limit=1000')).nextCursor
  const queries: [string, string][] = [
    ['no filter', 'limit=50'],
    ['model, common (30%)', 'model=level-smoothing&limit=50'],
    ['model, rare (0.5%)', 'model=auto-arima&limit=50'],
    ['warning (5%)', 'warning=short-history&limit=50'],
    ['failed (0.5%)', 'failed=true&limit=50'],
    ['exception list (2%)', 'exception=true&limit=50'],
    ['minError=2 (about 12%)', 'minError=2&limit=50'],
    ['maxError=0.31 (about 6%)', 'maxError=0.31&limit=50'],
    ['model + tag + prefix', 'model=theta&tag=category:heating&prefix=HTG-15&limit=50'],
    ['model + warning + minError', 'model=croston&warning=intermittent-demand&minError=1.5&limit=50'],
    ['exception + failed=false + tag', 'exception=true&failed=false&tag=category:garden&limit=50'],
    // Few matches and no small set to walk: each request stops at MAX_EXAMINED rows (the bound).
    ['sparse: minError=2.49 (about 0.2%)', 'minError=2.49&limit=50'],
    ['sort=error, model (largest error first)', 'sort=error&model=theta&limit=50'],
  ]
  if (deep !== null) queries.push(['model, common, 1,000 deep (limit 200)', `model=level-smoothing&limit=200&cursor=${deep}`])
  let worstP95 = 0
  process.stdout.write(`| filter (GET /v1/skus, ${QUERIES} requests each) | median ms | p95 ms | items | cursor |\n|---|---|---|---|---|\n`)
  for (const [name, q] of queries) {
    const times: number[] = []
    let last = { items: [] as unknown[], nextCursor: null as string | null }
    for (let i = 0; i < QUERIES; i++) {
      const t0 = performance.now()
      last = await get(q)
      times.push(performance.now() - t0)
    }
    const p95 = quantile(times, 0.95)
    worstP95 = Math.max(worstP95, p95)
    process.stdout.write(
      `| ${name} | ${quantile(times, 0.5).toFixed(1)} | ${p95.toFixed(1)} | ${last.items.length} | ${last.nextCursor === null ? 'no' : 'yes'} |\n`,
    )
  }
  process.stdout.write(`worst p95 ${worstP95.toFixed(1)} ms (target ${TARGET_MS} ms): ${worstP95 <= TARGET_MS ? 'met' : 'NOT MET'}\n`)
} finally {
  await app.close()
  await gateway.close()
  let cursor = '0'
  do {
    const [next, keys] = await redis.scan(cursor, 'MATCH', `${prefix}*`, 'COUNT', 1000)
    cursor = next
    if (keys.length > 0) await redis.unlink(...keys)
  } while (cursor !== '0')
  redis.disconnect()
}
