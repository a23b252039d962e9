/**
 * History upload benchmark: streamed CSV uploads of growing size through
 * POST /v1/history (app.inject, real Redis). Prints rows per second of a
 * plain upload, then repeats it measuring the live heap: every 50 ms a forced
 * full GC, then heapUsed, so garbage does not count. If the upload were
 * buffered, the live-heap peak would rise with the upload size; streamed, it
 * stays near the per-SKU aggregates (500 SKUs x months here).
 * Invented data (daily rows of 500 SKUs summed into months), for measuring only.
 *
 *   REDIS_URL=redis://127.0.0.1:6379 npm run bench:history -- 200000 800000 1600000
 *   REDIS_URL=redis://127.0.0.1:6379 npm run bench:history -- --skus 500000 500000
 * --skus N: N distinct SKUs a day (default 500); with N as large as the rows, every
 * row is its own SKU, the case whose memory grew with the upload until uploads
 * were staged in Redis past UPLOAD_SPILL_BYTES.
 */
import { randomBytes } from 'node:crypto'
import { Readable } from 'node:stream'
import { Redis } from 'ioredis'
import { build } from '../src/http/app.js'
import { HistoryStore } from '../src/storage/histories/history-store.js'
import { deletePrefix } from './e2e-redis.js'
import { benchConfig, noRunGateway } from './in-process-app.js'

const args = process.argv.slice(2)
const skusAt = args.indexOf('--skus')
const SKUS = skusAt >= 0 ? Number(args.splice(skusAt, 2)[1]) : 500
if (!Number.isInteger(SKUS) || SKUS < 1) throw new Error('--skus must be a positive integer')
const sizes = args.map(Number).filter((n) => n > 0)
const rowCounts = sizes.length > 0 ? sizes : [200_000, 800_000, 1_600_000]
const redisUrl = process.env.REDIS_URL ?? 'redis://127.0.0.1:6379'
const prefix = `bench-history-${randomBytes(4).toString('hex')}`

const config = benchConfig(redisUrl, prefix, { bodyLimitBytes: 1024 * 1024 * 1024 })
const gateway = noRunGateway('history')

function* csv(rows: number): Generator<string> {
  yield 'sku,period,demand\n'
  const days = Math.ceil(rows / SKUS)
  for (let d = 0; d < days; d++) {
    const date = new Date(Date.UTC(2000, 0, 1) + d * 86_400_000).toISOString().slice(0, 10)
    let chunk = ''
    for (let i = 0; i < SKUS && d * SKUS + i < rows; i++) {
      chunk += `B-${i},${date},${(i + d) % 7}\n`
      // Chunks of at most 5,000 rows, as a client would send them (and so a day of many SKUs is not one huge string).
      if ((i + 1) % 5000 === 0) {
        yield chunk
        chunk = ''
      }
    }
    yield chunk
  }
}

const gc = (globalThis as { gc?: () => void }).gc
const redis = new Redis(redisUrl, { maxRetriesPerRequest: 2 })
const app = await build({ config, gateway, histories: new HistoryStore(redis, { prefix }) })
try {
  if (!gc) throw new Error('run with node --expose-gc (npm run bench:history does)')
  process.stdout.write('rows        MB     ms  rows/s   peak live heap growth MB\n')
  for (const rows of rowCounts) {
    let bytes = 0
    for (const c of csv(rows)) bytes += Buffer.byteLength(c)
    const upload = () =>
      app.inject({
        method: 'POST',
        url: '/v1/history?mode=replace',
        headers: { 'content-type': 'text/csv' },
        payload: Readable.from(csv(rows)),
      })
    const started = performance.now()
    const res = await upload()
    const ms = performance.now() - started
    if (res.statusCode !== 200) throw new Error(`upload failed: ${res.statusCode} ${res.body.slice(0, 200)}`)
    gc()
    const base = process.memoryUsage().heapUsed
    let peak = 0
    const sampler = setInterval(() => {
      gc()
      peak = Math.max(peak, process.memoryUsage().heapUsed - base)
    }, 50)
    await upload()
    clearInterval(sampler)
    process.stdout.write(
      `${String(rows).padEnd(10)} ${(bytes / 1e6).toFixed(1).padStart(5)} ${ms.toFixed(0).padStart(6)} ${(rows / (ms / 1000)).toFixed(0).padStart(7)}   ${(peak / 1e6).toFixed(1).padStart(8)}\n`,
    )
  }
} finally {
  await app.close()
  await deletePrefix(redis, prefix) // every key this bench wrote starts with `${prefix}:`
  redis.disconnect()
}
