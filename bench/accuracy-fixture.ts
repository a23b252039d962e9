/** The accuracy fixture (test/fixtures/accuracy/reference.json) as the benchmarks read it. */
import { readFileSync } from 'node:fs'
import { dirname, join } from 'node:path'
import { fileURLToPath } from 'node:url'
import type { Frequency } from '../src/engine/index.js'

export interface ReferenceForecasts {
  model: string
  forecast: number[]
  lower80: number[]
  upper80: number[]
  lower95: number[]
  upper95: number[]
}

/** One test origin of a series: train on `train`, forecast `test`. */
export interface OriginPart {
  train: number[]
  test: number[]
  ets: ReferenceForecasts
  seasonalNaive: number[]
}

export interface FixtureSeries extends OriginPart {
  name: string
  source: string
  frequency: Frequency
  seasonLength: number
  start: string | null
  /** The season before the last held out instead (train: every point before it). */
  previous?: OriginPart
}

export interface Fixture {
  versions: Record<string, string>
  series: FixtureSeries[]
}

/** Which season is held out: the last one (the scored benchmark) or the one before it. */
export const ORIGINS = ['last', 'previous'] as const
export type Origin = (typeof ORIGINS)[number]

export function loadFixture(): Fixture {
  const here = dirname(fileURLToPath(import.meta.url))
  return JSON.parse(readFileSync(join(here, '..', 'test', 'fixtures', 'accuracy', 'reference.json'), 'utf8')) as Fixture
}

/**
 * The fixture's series at an origin: for 'previous', each series' train, test and
 * reference forecasts replaced by those of its `previous` part (the start label is the
 * same, since both train parts begin at the first kept point).
 */
export function atOrigin(fixture: Fixture, origin: Origin): Fixture {
  if (origin === 'last') return fixture
  const series = fixture.series.map((s) => {
    if (!s.previous) throw new Error(`${s.name}: the fixture has no previous origin (regenerate it with scripts/accuracy/make_fixture.py)`)
    const { previous, ...rest } = s
    return { ...rest, ...previous }
  })
  return { ...fixture, series }
}
