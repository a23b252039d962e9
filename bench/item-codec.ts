/**
 * Per-item cost of the stored result form outside the engine: real engine
 * results of synthetic 60-point monthly series (bench/synthetic.ts), stored
 * and served as results-page JSON, in the current format (0x03: served JSON
 * with the structure's preset DEFLATE dictionary) and the earlier ones (0x02:
 * served JSON with a 12 KB dictionary of whole items; 0x01: compact JSON,
 * one-shot DEFLATE, decoded and re-serialised per page), timed on one thread
 * in CPU microseconds per item, with the stored bytes per item. Invented data,
 * for timing only.
 *
 *   npm run bench:codec [-- --items 2000 --reps 5 --seed 7]
 */
import { loadavg } from 'node:os'
import { deflateRawSync } from 'node:zlib'
import { forecastSeries } from '../src/engine/index.js'
import { toResultItem } from '../src/storage/codec.js'
import { encodeItem, loadItem, servedBody, servedItemJson, storeItem } from '../src/storage/item-codec.js'
import { deflateWithHeader } from '../src/storage/item-deflate.js'
import { servedBytes } from '../src/storage/item-served.js'
import type { ResultItem } from '../src/storage/types.js'
import { median } from './accuracy-metrics.js'
import { syntheticSet } from './synthetic.js'
import { positiveIntOption } from './cli.js'

const ITEMS = positiveIntOption('items', 2000)
const REPS = Math.max(3, positiveIntOption('reps', 5))
const SEED = positiveIntOption('seed', 7)
const out = (line = ''): void => {
  process.stdout.write(line + '\n')
}

const items: ResultItem[] = syntheticSet(SEED, ITEMS, 60).map((s, i) =>
  toResultItem(`SKU-${String(i).padStart(7, '0')}`, forecastSeries({ values: s.values, frequency: 'month', horizon: 12 })),
)
const stored = items.map(storeItem)
const legacy = items.map((it) => Buffer.concat([Buffer.of(0x01), deflateRawSync(encodeItem(it))]))
const store02 = (it: ResultItem) => deflateWithHeader(0x02, servedBytes(it), 'served')
const served02 = items.map(store02)

/** Median CPU microseconds per item of `fn` over all items. */
function time(fn: (i: number) => unknown): number {
  for (let i = 0; i < ITEMS; i++) fn(i) // warm-up
  const perItem: number[] = []
  for (let r = 0; r < REPS; r++) {
    const before = process.cpuUsage()
    for (let i = 0; i < ITEMS; i++) fn(i)
    const cpu = process.cpuUsage(before)
    perItem.push((cpu.user + cpu.system) / ITEMS)
  }
  return median(perItem)
}

const rows: [string, number][] = [
  ['0x01 encodeItem (compact JSON)', time((i) => encodeItem(items[i]!))],
  ['0x01 store (compact JSON + one-shot DEFLATE)', time((i) => Buffer.concat([Buffer.of(0x01), deflateRawSync(encodeItem(items[i]!))]))],
  ['0x01 page item (INFLATE, decode, stringify)', time((i) => Buffer.from(JSON.stringify(loadItem(items[i]!.sku, legacy[i]!))))],
  ['servedBody (served JSON, 0x02 and 0x03)', time((i) => servedBody(items[i]!))],
  ['0x02 store (served JSON + DEFLATE, 12 KB dict.)', time((i) => store02(items[i]!))],
  ['0x02 page item (servedItemJson)', time((i) => servedItemJson(items[i]!.sku, served02[i]!))],
  ['0x03 storeItem (served JSON + DEFLATE)', time((i) => storeItem(items[i]!))],
  ['0x03 page item (servedItemJson)', time((i) => servedItemJson(items[i]!.sku, stored[i]!))],
  ['0x03 loadItem (to an object)', time((i) => loadItem(items[i]!.sku, stored[i]!))],
]
out(`Stored result items: ${ITEMS} engine results, ${REPS} repetitions, load average ${loadavg()[0].toFixed(2)}`)
for (const [name, us] of rows) out(`${name.padEnd(48)} ${us.toFixed(1).padStart(7)} us CPU per item`)
const size = (list: Buffer[]) => {
  const b = list.map((x) => x.length).sort((a, c) => a - c)
  return `median ${median(b)}, mean ${(b.reduce((a, c) => a + c, 0) / ITEMS).toFixed(0)}`
}
out(`stored bytes per item: 0x03 ${size(stored)}; 0x02 ${size(served02)}; 0x01 ${size(legacy)}`)
