/**
 * Per-item cost of the stored result form outside the engine: real engine
 * results of synthetic 60-point monthly series (bench/synthetic.ts), written as
 * served JSON, deflated with the structure dictionary (item-codec.ts), and
 * served as results-page JSON or read back into objects, timed on one thread
 * in CPU microseconds per item, with the stored bytes per item. Invented data,
 * for timing only.
 *
 *   npm run bench:codec [-- --items 2000 --reps 5 --seed 7]
 */
import { loadavg } from 'node:os'
import { forecastSeries } from '../src/engine/index.js'
import { loadItem, servedBody, servedItemJson, storeItem, storeServed } from '../src/storage/items/item-codec.js'
import { servedBytes } from '../src/storage/items/item-served.js'
import type { ResultItem } from '../src/runs/contract.js'
import { median } from './accuracy-metrics.js'
import { syntheticSet } from './synthetic.js'
import { positiveIntOption } from './cli.js'
import { toResultItem } from '../src/runs/forecast-sku.js'

const ITEMS = positiveIntOption('items', 2000)
const REPS = Math.max(3, positiveIntOption('reps', 5))
const SEED = positiveIntOption('seed', 7)
const out = (line = ''): void => {
  process.stdout.write(line + '\n')
}

const items: ResultItem[] = syntheticSet(SEED, ITEMS, 60).map((s, i) =>
  toResultItem(`SKU-${String(i).padStart(7, '0')}`, 'month', forecastSeries({ demand: s.values, frequency: 'month', horizon: 12 })),
)
const stored = items.map(storeItem)
const served = items.map((it) => Buffer.from(servedBytes(it)))

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
  ['servedBody (served JSON as a string)', time((i) => servedBody(items[i]!))],
  ['servedBytes (served JSON, UTF-8)', time((i) => servedBytes(items[i]!))],
  ['storeServed (DEFLATE of the served JSON)', time((i) => storeServed(served[i]!))],
  ['storeItem (served JSON + DEFLATE)', time((i) => storeItem(items[i]!))],
  ['page item (servedItemJson)', time((i) => servedItemJson(items[i]!.sku, stored[i]!))],
  ['loadItem (to an object)', time((i) => loadItem(items[i]!.sku, stored[i]!))],
]
out(`Stored result items: ${ITEMS} engine results, ${REPS} repetitions, load average ${loadavg()[0]!.toFixed(2)}`)
for (const [name, us] of rows) out(`${name.padEnd(48)} ${us.toFixed(1).padStart(7)} us CPU per item`)
const size = (list: Buffer[]) => {
  const b = list.map((x) => x.length).sort((a, c) => a - c)
  return `median ${median(b)}, mean ${(b.reduce((a, c) => a + c, 0) / ITEMS).toFixed(0)}`
}
out(`stored bytes per item: ${size(stored)}; served JSON ${size(served)}`)
