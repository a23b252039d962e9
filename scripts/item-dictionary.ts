/**
 * Writes src/storage/item-dictionary.ts: the preset DEFLATE dictionary of
 * stored result items (format 0x02, see item-codec.ts). Run once when a new
 * dictionary format is introduced, never to refresh the current one: items
 * already stored can only be read with the exact bytes they were compressed
 * with, so a different dictionary needs a new header byte.
 *
 * The dictionary is made of the served JSON of a few engine results on
 * invented series (bench/synthetic.ts, the benchmark's series): candidates of
 * several shapes and frequencies are added greedily, each time the one that
 * shrinks a separate sample of items most, up to 16 KB (the deflate window is
 * 32 KB, and every item compressed pays for hashing the dictionary).
 *
 *   npx tsx scripts/item-dictionary.ts
 */
import { writeFileSync } from 'node:fs'
import { deflateRawSync } from 'node:zlib'
import { syntheticSet } from '../bench/synthetic.js'
import { forecastSeries, type Frequency } from '../src/engine/index.js'
import { toResultItem } from '../src/storage/codec.js'
import { servedBody } from '../src/storage/item-codec.js'

const LIMIT = 16_000

const bodies = (seed: number, count: number, frequency: Frequency, start?: string): string[] =>
  syntheticSet(seed, count, 60).map((s, i) =>
    servedBody(toResultItem(`S-${i}`, forecastSeries({ values: s.values, frequency, horizon: 12, ...(start ? { start } : {}) }))),
  )

const sample = [...bodies(7, 400, 'month', '2021-01'), ...bodies(8, 50, 'month'), ...bodies(9, 50, 'week', '2020-W01'), ...bodies(10, 50, 'quarter', '2020-Q1')]
  .map((b) => Buffer.from(b))
const candidates = [...bodies(99, 10, 'month', '2019-01'), ...bodies(98, 5, 'month'), ...bodies(97, 5, 'week', '2019-W01'), ...bodies(96, 5, 'quarter', '2019-Q1')]
const meanSize = (dictionary: string) =>
  sample.reduce((a, b) => a + deflateRawSync(b, { dictionary: Buffer.from(dictionary), level: 6 }).length, 0) / sample.length

let chosen: string[] = []
let size = meanSize('')
for (;;) {
  let best = -1
  let bestSize = size - 2
  candidates.forEach((c, i) => {
    // Later picks go in front: deflate codes nearer (later) dictionary bytes more cheaply.
    const dictionary = [c, ...chosen].join('')
    if (dictionary.length > LIMIT) return
    const s = meanSize(dictionary)
    if (s < bestSize) [best, bestSize] = [i, s]
  })
  if (best < 0) break
  chosen = [candidates.splice(best, 1)[0]!, ...chosen]
  size = bestSize
}

const file = new URL('../src/storage/item-dictionary.ts', import.meta.url)
writeFileSync(
  file,
  `/**
 * Preset DEFLATE dictionary of stored result items (format 0x02 in
 * item-codec.ts): the served JSON of ${chosen.length} engine results on invented series,
 * written by scripts/item-dictionary.ts. Frozen: items in Redis can only be
 * read with these exact bytes, so never edit or regenerate it; a new
 * dictionary needs a new format byte. Mean stored item of the sample:
 * ${meanSize('').toFixed(0)} B without it, ${size.toFixed(0)} B with it (level 6).
 */
export const ITEM_DICTIONARY: Buffer = Buffer.from(
  [
${chosen.map((c) => `    ${JSON.stringify(c)},`).join('\n')}
  ].join(''),
  'utf8',
)
`,
)
process.stdout.write(`wrote ${chosen.length} items, ${chosen.join('').length} bytes; mean item ${size.toFixed(0)} B\n`)
