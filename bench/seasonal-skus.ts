/**
 * Seeded synthetic monthly SKUs with a clear yearly season and 36-47 months of history
 * (our own invented data, in the distributor's scenario: garden lines that peak in
 * summer, heating lines that peak in winter). The case issue 12 reported: three to four
 * years of history are common in ERP systems, and seasonality was missed there.
 *
 * Each SKU: demand[t] = level * (1 + growth * t) * season[t mod 12] * (1 + cv * noise),
 * rounded to whole units and kept >= 0, with
 *   level  uniform 40 .. 400 units a month;
 *   growth uniform -0.5% .. +1.5% of the level a month;
 *   season 1 + amplitude * cos(2 pi (month - peak) / 12), amplitude uniform 0.35 .. 0.8,
 *          peak month uniform (summer or winter lines alike);
 *   cv     uniform 0.05 .. 0.15 (normal noise).
 * The next 12 months are drawn the same way, as the year to score forecasts on.
 */
import { createRandom, normalDraw } from '../scripts/seeded-random.js'

export interface SeasonalSku {
  readonly history: number[]
  /** The 12 months after the history. */
  readonly nextYear: number[]
}

export function seasonalSkus(seed: number, count: number): SeasonalSku[] {
  const random = createRandom(seed)
  const out: SeasonalSku[] = []
  for (let i = 0; i < count; i++) {
    const length = 36 + Math.floor(random() * 12)
    const level = 40 + random() * 360
    const growth = -0.005 + random() * 0.02
    const amplitude = 0.35 + random() * 0.45
    const peak = Math.floor(random() * 12)
    const cv = 0.05 + random() * 0.1
    const values: number[] = []
    for (let t = 0; t < length + 12; t++) {
      const season = 1 + amplitude * Math.cos((2 * Math.PI * (t - peak)) / 12)
      const v = level * (1 + growth * t) * season * (1 + cv * normalDraw(random))
      values.push(Math.max(0, Math.round(v)))
    }
    out.push({ history: values.slice(0, length), nextYear: values.slice(length) })
  }
  return out
}
