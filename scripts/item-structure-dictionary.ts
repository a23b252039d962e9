/**
 * Writes src/storage/item-structure-dictionary.ts: the preset DEFLATE
 * dictionary of stored result items in format 0x03 (see item-codec.ts). Like
 * scripts/item-dictionary.ts it is run once, when the format is introduced,
 * never to refresh it: stored items can only be read with the exact bytes they
 * were compressed with.
 *
 * Every item compressed pays for hashing the dictionary into DEFLATE's tables
 * (zlib's deflateSetDictionary on each reset), and the 0x02 dictionary, three
 * whole served items (about 12 KB), is mostly numbers that later items never
 * repeat. This one keeps the structure: the 0x02 dictionary with every number
 * after a key removed, then cut into its JSON objects (leaderboard entries,
 * forecast points, warnings) and thinned greedily, dropping each piece whose
 * removal does not make a sample of items larger (by more than half a byte on
 * average). The sample and a separate check set are served items of engine
 * results on invented series (bench/synthetic.ts).
 *
 *   npx tsx scripts/item-structure-dictionary.ts
 */
import { writeFileSync } from 'node:fs'
import { deflateRawSync } from 'node:zlib'
import { syntheticSet } from '../bench/synthetic.js'
import { forecastSeries, type Frequency } from '../src/engine/index.js'
import { toResultItem } from '../src/storage/codec.js'
import { servedBody } from '../src/storage/item-codec.js'
import { ITEM_DEFLATE_LEVEL, ITEM_DEFLATE_STRATEGY } from '../src/storage/item-deflate.js'
import { ITEM_DICTIONARY } from '../src/storage/item-dictionary.js'

const bodies = (seed: number, count: number, frequency: Frequency, start?: string): Buffer[] =>
  syntheticSet(seed, count, 60).map((s, i) =>
    Buffer.from(servedBody(toResultItem(`S-${i}`, forecastSeries({ values: s.values, frequency, horizon: 12, ...(start ? { start } : {}) })))),
  )
const set = (seed: number): Buffer[] => [
  ...bodies(seed, 300, 'month', '2021-01'),
  ...bodies(seed + 1, 40, 'month'),
  ...bodies(seed + 2, 40, 'week', '2020-W01'),
  ...bodies(seed + 3, 40, 'quarter', '2020-Q1'),
]
const sample = set(7)
const check = set(40)
const meanSize = (items: Buffer[], dictionary: string) =>
  items.reduce((a, b) => a + deflateRawSync(b, { dictionary: Buffer.from(dictionary), level: ITEM_DEFLATE_LEVEL, strategy: ITEM_DEFLATE_STRATEGY }).length, 0) /
  items.length

const numberless = ITEM_DICTIONARY.toString('utf8').replace(/(":)-?[0-9][0-9.e+-]*/g, '$1')
let pieces = numberless.split(/(?<=\}),(?=\{)/)
let size = meanSize(sample, pieces.join(','))
for (let pass = 0; pass < 2; pass++) {
  for (let i = pieces.length - 1; i >= 0; i--) {
    const trial = pieces.filter((_, k) => k !== i)
    const s = meanSize(sample, trial.join(','))
    if (s < size + 0.5) [pieces, size] = [trial, s]
  }
}
const dictionary = pieces.join(',')
const before = meanSize(check, ITEM_DICTIONARY.toString('utf8'))
const after = meanSize(check, dictionary)

const file = new URL('../src/storage/item-structure-dictionary.ts', import.meta.url)
writeFileSync(
  file,
  `/**
 * Preset DEFLATE dictionary of stored result items in format 0x03
 * (item-codec.ts): the structure of served items (keys, model names,
 * statuses, reasons, warnings) without their numbers, ${dictionary.length} bytes, written by
 * scripts/item-structure-dictionary.ts from the 0x02 dictionary. Frozen: items
 * in Redis can only be read with these exact bytes, so never edit or
 * regenerate it; a new dictionary needs a new format byte. Mean stored item of
 * the script's check set (level ${ITEM_DEFLATE_LEVEL}): ${after.toFixed(0)} B with it, ${before.toFixed(0)} B with the
 * 0x02 dictionary (${ITEM_DICTIONARY.length} bytes).
 */
export const STRUCTURE_DICTIONARY: Buffer = Buffer.from(
  [
${pieces.map((c, i) => `    ${JSON.stringify(i === 0 ? c : ',' + c)},`).join('\n')}
  ].join(''),
  'utf8',
)
`,
)
process.stdout.write(`wrote ${pieces.length} pieces, ${dictionary.length} bytes; check set mean item ${after.toFixed(1)} B (0x02 dictionary: ${before.toFixed(1)} B)\n`)
