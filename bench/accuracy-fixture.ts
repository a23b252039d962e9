/** The accuracy fixture (test/fixtures/accuracy/reference.json) as the benchmarks read it. */
import { readFileSync } from 'node:fs'
import { dirname, join } from 'node:path'
import { fileURLToPath } from 'node:url'
import type { Frequency } from '../src/engine/index.js'

export interface FixtureSeries {
  name: string
  source: string
  frequency: Frequency
  seasonLength: number
  start: string | null
  train: number[]
  test: number[]
  ets: { model: string; forecast: number[]; lower80: number[]; upper80: number[]; lower95: number[]; upper95: number[] }
  seasonalNaive: number[]
}

export interface Fixture {
  versions: Record<string, string>
  series: FixtureSeries[]
}

export function loadFixture(): Fixture {
  const here = dirname(fileURLToPath(import.meta.url))
  return JSON.parse(readFileSync(join(here, '..', 'test', 'fixtures', 'accuracy', 'reference.json'), 'utf8')) as Fixture
}
