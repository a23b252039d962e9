/**
 * Writes src/storage/items/item-structure-dictionary.ts: the preset DEFLATE
 * dictionary of stored result items (item-codec.ts). Run it when the served
 * JSON of a result item changes shape (field names, model ids, warning
 * texts); items already in Redis can only be read with the dictionary they
 * were written with, so a new one makes them unreadable.
 *
 * Every item compressed pays for hashing the dictionary into DEFLATE's tables,
 * and numbers are never repeated from one item to the next, so the dictionary
 * keeps only structure: the served JSON of engine results on invented series
 * (bench/synthetic.ts) with every number after a key removed, cut into its
 * JSON objects (candidates, forecast points, warnings), each distinct piece
 * once, then thinned greedily: a piece goes when removing it does not make a
 * sample of items larger (by more than a byte on average). A separate
 * check set reports the mean stored item.
 *
 *   npx tsx scripts/item-structure-dictionary.ts
 */
import { writeFileSync } from 'node:fs'
import { deflateRawSync } from 'node:zlib'
import { syntheticSet } from '../bench/synthetic.js'
import { forecastSeries, type Frequency } from '../src/engine/index.js'
import { ITEM_DEFLATE_OPTIONS, servedBody } from '../src/storage/items/item-codec.js'
import { toResultItem } from '../src/runs/forecast-sku.js'

const bodies = (seed: number, count: number, frequency: Frequency, start?: string): Buffer[] =>
  syntheticSet(seed, count, 60).map((s, i) =>
    Buffer.from(servedBody(toResultItem(`S-${i}`, frequency, forecastSeries({ demand: s.values, frequency, horizon: 12, ...(start ? { firstPeriod: start } : {}) })))),
  )
const set = (seed: number, scale: number): Buffer[] => [
  ...bodies(seed, 30 * scale, 'month', '2021-01'),
  ...bodies(seed + 1, 4 * scale, 'month'),
  ...bodies(seed + 2, 4 * scale, 'week', '2020-W01'),
  ...bodies(seed + 3, 4 * scale, 'quarter', '2020-Q1'),
]
const source = set(99, 1)
const sample = set(7, 10)
const check = set(40, 10)
const meanSize = (items: Buffer[], dictionary: string) => {
  const options = { ...ITEM_DEFLATE_OPTIONS, dictionary: Buffer.from(dictionary) }
  return items.reduce((a, b) => a + deflateRawSync(b, options).length, 0) / items.length
}

// Numbers after a key, in arrays and lists; a digit inside text (`2024-01`, `lag 12`) follows a quote, letter or blank.
const numberless = (body: Buffer) => body.toString('utf8').replace(/(?<=[:[,])-?[0-9][0-9.eE+-]*/g, '')
let pieces = [...new Set(source.flatMap((b) => numberless(b).split(/(?<=\}),(?=\{)/)))]
let size = meanSize(sample, pieces.join(','))
for (let pass = 0; pass < 2; pass++) {
  for (let i = pieces.length - 1; i >= 0; i--) {
    const trial = pieces.filter((_, k) => k !== i)
    const s = meanSize(sample, trial.join(','))
    if (s < size + 1) [pieces, size] = [trial, s]
  }
}
const dictionary = pieces.join(',')
const without = check.reduce((a, b) => a + deflateRawSync(b, { ...ITEM_DEFLATE_OPTIONS, dictionary: undefined }).length, 0) / check.length
const after = meanSize(check, dictionary)

const file = new URL('../src/storage/items/item-structure-dictionary.ts', import.meta.url)
writeFileSync(
  file,
  `/**
 * Preset DEFLATE dictionary of stored result items (item-codec.ts): the
 * structure of served items (keys, model ids, statuses, reasons, warnings)
 * without their numbers, written by scripts/item-structure-dictionary.ts
 * (its size and what it saves: bench/RESULTS.md, "Stored result items").
 * Items in Redis can only be read with the bytes they were written with:
 * regenerate it with the script (never edit it) when the served structure
 * changes, knowing that items stored before become unreadable.
 */
export const STRUCTURE_DICTIONARY: Buffer = Buffer.from(
  [
${pieces.map((c, i) => `    ${JSON.stringify(i === 0 ? c : ',' + c)},`).join('\n')}
  ].join(''),
  'utf8',
)
`,
)
process.stdout.write(`wrote ${pieces.length} pieces, ${dictionary.length} bytes; check set mean item ${after.toFixed(1)} B (without a dictionary ${without.toFixed(1)} B)\n`)
