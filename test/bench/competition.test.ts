/**
 * The competition benchmark's scorer and its Naive2 against the reference results shipped
 * with the M3 data (bench/data/m3/baselines.md and baselines/*.json, computed with
 * statsmodels 0.13.5): a scorer written to PROTOCOL.md must reproduce the published rows
 * from the published per-series forecasts.
 */
import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { loadM3, loadReference, trainingSplit, spread, type M3Series } from '../../bench/competition-data.js'
import { naive2 } from '../../bench/competition-naive2.js'
import { aggregate, owa, protocolScale, scoreSeries } from '../../bench/competition-scoring.js'

const series = loadM3()

/** Rows of baselines.md: `| method | n | sMAPE | MASE | MSIS | cov80 | cov95 | OWA |` under `**m3 / group**`. */
function publishedRows(): Map<string, number[]> {
  const text = readFileSync(new URL('../../bench/data/m3/baselines.md', import.meta.url), 'utf8')
  const rows = new Map<string, number[]>()
  let group = ''
  for (const line of text.split('\n')) {
    const heading = /^\*\*m3 \/ (\w+)/.exec(line)
    if (heading) group = heading[1]!
    const cells = line.split('|').map((c) => c.trim()).filter((c) => c !== '')
    if (group && cells.length === 8 && /^\d+$/.test(cells[1]!)) rows.set(`${group}/${cells[0]}`, cells.slice(1).map(Number))
  }
  return rows
}

describe('competition scoring (bench/data/m3/PROTOCOL.md)', () => {
  it('reads all 3,003 series with the official horizons', () => {
    expect(series).toHaveLength(3003)
    const h = { year: 6, quarter: 8, month: 18, other: 8 }
    for (const s of series) expect(s.h).toBe(h[s.frequency])
  })

  it('uses lag 1 for the scale when the training part is shorter than 2m + 1 values', () => {
    // Hand-checkable: lag 4 needs 9 values; with 8 the lag-1 differences are used.
    expect(protocolScale([1, 2, 3, 4, 5, 6, 7, 8], 4)).toBe(1)
    expect(protocolScale([1, 2, 3, 4, 5, 6, 7, 8, 9], 4)).toBe(4)
  })

  // Source: bench/data/m3/baselines.md (statsmodels 0.13.5), printed to 2-3 decimals.
  it.each(['naive2', 'theta', 'comb'] as const)('reproduces the published rows of %s', (method) => {
    const published = publishedRows()
    const table = loadReference(method)
    const n2 = loadReference('naive2')
    const score = (s: M3Series, f: ReturnType<typeof table.get>) => scoreSeries(s.train, s.test, s.seasonLength, f!)
    for (const group of ['year', 'quarter', 'month', 'other', 'all']) {
      const members = series.filter((s) => group === 'all' || s.frequency === group)
      const a = aggregate(members.map((s) => score(s, table.get(s.id))))
      const b = aggregate(members.map((s) => score(s, n2.get(s.id))))
      const row = published.get(`${group}/${method}`)!
      expect(a.n).toBe(row[0])
      expect(a.smape).toBeCloseTo(row[1]!, 2)
      expect(a.mase).toBeCloseTo(row[2]!, 3)
      expect(a.msis).toBeCloseTo(row[3]!, 2)
      expect(a.cov80).toBeCloseTo(row[4]!, 3)
      expect(a.cov95).toBeCloseTo(row[5]!, 3)
      expect(owa(a, b)).toBeCloseTo(row[6]!, 3)
    }
  })

  // Source: bench/data/m3/baselines/naive2.json (statsmodels 0.13.5), rounded to 3 decimals there.
  it('computes Naive2 as the reference does, seasonal test included', () => {
    const reference = loadReference('naive2')
    for (const s of series) {
      const ours = naive2(s.train, s.seasonLength, s.h)
      const ref = reference.get(s.id)!
      for (let k = 0; k < s.h; k++) {
        expect(Math.abs(ours.point[k]! - ref.point[k]!)).toBeLessThanOrEqual(1e-6 * Math.abs(ref.point[k]!) + 6e-4)
        expect(Math.abs(ours.upper95[k]! - ref.upper95[k]!)).toBeLessThanOrEqual(1e-6 * Math.abs(ref.upper95[k]!) + 6e-4)
      }
    }
  })

  it('the training split never reads the test values', () => {
    const split = trainingSplit(series)
    expect(split).toHaveLength(3003)
    for (const [i, s] of split.entries()) {
      const full = series[i]!
      expect(s.test).toEqual(full.train.slice(-full.h))
      expect(s.train.length + s.h).toBe(full.train.length)
    }
  })

  it('spreads a limit evenly', () => {
    expect(spread([0, 1, 2, 3, 4, 5, 6, 7, 8, 9], 3)).toEqual([0, 3, 6])
  })
})
