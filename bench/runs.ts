/**
 * Run machinery benchmark: one run of N synthetic monthly series through the
 * gateway, the queue and in-process sandboxed workers against a real Redis.
 * A first, smaller run warms the worker threads (loading tsx and the engine,
 * JIT); the second, measured run is what a long-lived worker sees. Prints wall
 * time, throughput, the ratio to the engine alone on one thread, and stored
 * bytes per SKU result, then deletes its keys. Invented data, for timing only.
 *
 *   REDIS_URL=redis://127.0.0.1:6379 npm run bench:runs -- 5000
 *   (env WORKER_CONCURRENCY, CHUNK_SIZE; defaults: one thread per core, 500)
 */
import { randomBytes } from 'node:crypto'
import { availableParallelism } from 'node:os'
import { Redis } from 'ioredis'
import type { Config } from '../src/config.js'
import { forecastSeries } from '../src/engine/index.js'
import { createLogger } from '../src/logger.js'
import { createRunGateway } from '../src/queue/gateway.js'
import { startProcessWorkers } from '../src/worker-main.js'
import { runKeys } from '../src/storage/keys.js'
import { RunSettings, type SeriesItem } from '../src/schemas/run.js'
import { SHAPES, createRandom, syntheticSeries } from './synthetic.js'
import { deletePrefix } from './e2e-redis.js'
import { benchConfig } from './in-process-app.js'

const count = Number(process.argv[2] ?? 5000)
const redisUrl = process.env.REDIS_URL ?? 'redis://127.0.0.1:6379'
const prefix = `bench-runs-${randomBytes(4).toString('hex')}`
const config = benchConfig(redisUrl, prefix, {
  chunkSize: Number(process.env.CHUNK_SIZE ?? 500),
  workerConcurrency: Number(process.env.WORKER_CONCURRENCY ?? 0),
  rateLimitMax: 1000,
  logLevel: (process.env.LOG_LEVEL as Config['logLevel'] | undefined) ?? 'warn',
})

const random = createRandom(20260301)
const series: SeriesItem[] = Array.from({ length: count }, (_, i) => ({
  sku: `B-${String(i).padStart(6, '0')}`,
  demand: syntheticSeries(random, SHAPES[i % SHAPES.length]!, 36 + (i % 25)),
}))

// Baseline: the engine alone on this thread over a sample (second pass, JIT warm),
// to express the run's speed as a ratio.
const settings = RunSettings.parse({ horizon: 12 })
const engineSample = series.slice(0, Math.min(500, count))
const forecastAll = () => {
  for (const s of engineSample) {
    try {
      forecastSeries({ demand: s.demand, frequency: 'month', horizon: 12 })
    } catch {
      // Rejected series cost time too; the run counts them as failed items.
    }
  }
}
forecastAll()
const e0 = performance.now()
forecastAll()
const engineMsPerSeries = (performance.now() - e0) / engineSample.length

const logger = createLogger({ level: 'warn' })
const gateway = createRunGateway(config, { logger })
const workers = startProcessWorkers(config, logger)
const redis = new Redis(redisUrl)

/** Submits a run and polls until it ends; returns the record and the wall time in seconds. */
async function timedRun(items: SeriesItem[]) {
  const t0 = performance.now()
  const run = await gateway.submit('bench', { ...settings, series: items })
  const submitMs = performance.now() - t0
  let record = run
  while (record.status === 'queued' || record.status === 'running') {
    await new Promise((r) => setTimeout(r, 50))
    record = (await gateway.get('bench', run.id))!
  }
  return { run, record, submitMs, seconds: (performance.now() - t0) / 1000 }
}

try {
  // Cold: fresh worker threads load tsx and the engine and warm up the JIT during this run.
  const cold = await timedRun(series.slice(0, Math.min(count, workers.concurrency * config.chunkSize)))
  // Warm: the measured run, as a long-lived worker sees it.
  const { run, record, submitMs, seconds: totalS } = await timedRun(series)
  const k = runKeys(prefix, 'bench', run.id)
  const itemsBytes = Number(await redis.memory('USAGE', k.items, 'SAMPLES', 0))
  const skusBytes = Number(await redis.memory('USAGE', k.skus, 'SAMPLES', 0))
  const sample = await redis.hrandfield(k.items, 200)
  const lens = await Promise.all((sample as string[]).map((f) => redis.hstrlen(k.items, f)))
  const sorted = [...lens].sort((a, b) => a - b)
  const out = {
    series: count,
    chunks: Math.ceil(count / config.chunkSize),
    threads: workers.concurrency,
    cores: availableParallelism(),
    status: record.status,
    progress: record.progress,
    submitMs: Math.round(submitMs),
    warmUpRun: { series: cold.record.progress.total, seconds: Number(cold.seconds.toFixed(2)) },
    totalSeconds: Number(totalS.toFixed(2)),
    seriesPerSecond: Math.round(count / totalS),
    engineOnlyMsPerSeries: Number(engineMsPerSeries.toFixed(2)),
    // > 1 means the run beat one thread running the engine alone.
    speedupOverOneThread: Number(((engineMsPerSeries * count) / 1000 / totalS).toFixed(2)),
    redisBytesPerSku: Math.round((itemsBytes + skusBytes) / count),
    storedItemBytesMedian: sorted[Math.floor(sorted.length / 2)],
  }
  process.stdout.write(`${JSON.stringify(out, null, 2)}\n`)
} finally {
  await workers.close()
  await gateway.close()
  await deletePrefix(redis, prefix) // every key this bench wrote starts with `${prefix}:`
  redis.disconnect()
}
