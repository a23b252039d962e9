import type { ForecastPoint } from '../../src/engine/index.js'

/** The low bound of a forecast point's interval at `level` percent. */
export function low(p: ForecastPoint, level: number): number {
  const iv = p.intervals.find((i) => i.level === level)
  if (!iv) throw new Error(`no ${level}% interval on ${p.period}`)
  return iv.low
}

/** The high bound of a forecast point's interval at `level` percent. */
export function high(p: ForecastPoint, level: number): number {
  const iv = p.intervals.find((i) => i.level === level)
  if (!iv) throw new Error(`no ${level}% interval on ${p.period}`)
  return iv.high
}
