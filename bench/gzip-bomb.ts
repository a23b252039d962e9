/**
 * Gzip bomb benchmark: bodies sent with `Content-Encoding: gzip` that inflate
 * far past the body limit (64 MiB, the default), through POST /v1/history
 * (app.inject, real Redis). The bomb is a run of identical gzip members (a
 * valid gzip stream, RFC 1952 2.2), each 16 MiB of zeros once inflated: about
 * 16 KiB each on the wire. Prints the answer, the time to it, the bytes
 * inflated before the service stopped, and the peak growth of the live heap
 * (forced full GC every 200 ms, then heapUsed) and of RSS (every 10 ms) over the
 * process before the request.
 * A plain body just under the limit is measured last, the same way, for
 * comparison: a bomb should cost no more than that, whatever its inflated size.
 * The CSV bomb's time is mostly csv-parse reading 64 MiB of empty lines, as it
 * would read a plain body of that size.
 *
 *   REDIS_URL=redis://127.0.0.1:6379 npm run bench:gzip -- 1024 8192   (inflated MiB per bomb)
 */
import { randomBytes } from 'node:crypto'
import { Readable } from 'node:stream'
import { gzipSync } from 'node:zlib'
import { Redis } from 'ioredis'
import { build } from '../src/http/app.js'
import { HistoryStore } from '../src/storage/histories/history-store.js'
import { deletePrefix } from './e2e-redis.js'
import { benchConfig, noRunGateway } from './in-process-app.js'

const MIB = 1024 * 1024
const sizes = process.argv.slice(2).map(Number).filter((n) => n > 0)
const inflatedMiB = sizes.length > 0 ? sizes : [1024, 8192]
const redisUrl = process.env.REDIS_URL ?? 'redis://127.0.0.1:6379'
const prefix = `bench-gzip-${randomBytes(4).toString('hex')}`
const LIMIT = 64 * MIB

const config = benchConfig(redisUrl, prefix, { bodyLimitBytes: LIMIT })
const gateway = noRunGateway('gzip')

/** One gzip member: 16 MiB of `fill` once inflated. */
const member = (fill: string) => gzipSync(Buffer.alloc(16 * MIB, fill), { level: 9 })

/** `count` members after a first one that opens the body; sent as a stream of members. */
function* bomb(first: Buffer, repeat: Buffer, count: number): Generator<Buffer> {
  yield first
  for (let i = 0; i < count; i++) yield repeat
}

const gc = (globalThis as { gc?: () => void }).gc
const redis = new Redis(redisUrl, { maxRetriesPerRequest: 2 })
const app = await build({ config, gateway, histories: new HistoryStore(redis, { prefix }) })

async function measure(label: string, send: () => Promise<{ statusCode: number; body: string }>, wireBytes: number): Promise<void> {
  gc!()
  const heapBase = process.memoryUsage().heapUsed
  const rssBase = process.memoryUsage().rss
  let heapPeak = 0
  let rssPeak = 0
  const rssSampler = setInterval(() => {
    rssPeak = Math.max(rssPeak, process.memoryUsage().rss - rssBase)
  }, 10)
  const heapSampler = setInterval(() => {
    gc!()
    heapPeak = Math.max(heapPeak, process.memoryUsage().heapUsed - heapBase)
  }, 200)
  const started = performance.now()
  const res = await send()
  const ms = performance.now() - started
  clearInterval(rssSampler)
  clearInterval(heapSampler)
  const detail = res.statusCode === 200 ? '' : ` ${(JSON.parse(res.body) as { detail?: string }).detail ?? ''}`
  process.stdout.write(
    `${label.padEnd(44)} ${(wireBytes / MIB).toFixed(2).padStart(8)} ${String(res.statusCode).padStart(4)} ${ms.toFixed(0).padStart(6)} ` +
      `${(heapPeak / MIB).toFixed(1).padStart(9)} ${(rssPeak / MIB).toFixed(1).padStart(8)}${detail}\n`,
  )
}

try {
  if (!gc) throw new Error('run with node --expose-gc (npm run bench:gzip does)')
  const csvHead = gzipSync('sku,period,demand\nBOMB,2025-01,1\n')
  const jsonHead = gzipSync('{"series":[{"sku":"BOMB","firstPeriod":"2025-01","demand":[1]}]')
  const blanks = member(' ')
  const newlines = member('\n')
  process.stdout.write(`body limit ${LIMIT / MIB} MiB; ${(blanks.length / 1024).toFixed(1)} KiB of gzip per 16 MiB inflated\n`)
  process.stdout.write('body                                         wire MiB code     ms heap+ MiB rss+ MiB  detail\n')
  for (const mib of inflatedMiB) {
    const count = Math.ceil(mib / 16)
    const wire = (first: Buffer, repeat: Buffer) => first.length + count * repeat.length
    await measure(
      `gzip JSON inflating to ${mib} MiB`,
      () =>
        app.inject({
          method: 'POST',
          url: '/v1/history',
          headers: { 'content-type': 'application/json', 'content-encoding': 'gzip' },
          payload: Readable.from(bomb(jsonHead, blanks, count)),
        }),
      wire(jsonHead, blanks),
    )
    await measure(
      `gzip CSV inflating to ${mib} MiB`,
      () =>
        app.inject({
          method: 'POST',
          url: '/v1/history',
          headers: { 'content-type': 'text/csv', 'content-encoding': 'gzip' },
          payload: Readable.from(bomb(csvHead, newlines, count)),
        }),
      wire(csvHead, newlines),
    )
  }
  // Last, so the bombs' RSS is measured before the allocator holds a 64 MiB body's pages.
  const plain = () => {
    const body = Buffer.alloc(LIMIT - 1024, ' ')
    body.write('{"series":[{"sku":"PLAIN","firstPeriod":"2025-01","demand":[1]}]')
    body.write('}', body.length - 1)
    return body
  }
  await measure(
    'plain JSON just under the limit (no gzip)',
    () => app.inject({ method: 'POST', url: '/v1/history', headers: { 'content-type': 'application/json' }, payload: plain() }),
    LIMIT - 1024,
  )
} finally {
  await app.close()
  await deletePrefix(redis, prefix) // every key this bench wrote starts with `${prefix}:`
  redis.disconnect()
}
