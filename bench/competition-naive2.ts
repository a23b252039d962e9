/**
 * Naive2, the reference of OWA, written to bench/data/m3/PROTOCOL.md so the benchmark can
 * score splits the reference files do not cover (--split train):
 *  - seasonal iff m > 1, n >= 3m and |r_m| > 1.645 sqrt((1 + 2 sum_{k<m} r_k^2) / n)
 *    (the 90% autocorrelation test of the M4 benchmarks);
 *  - seasonal series are adjusted by a classical multiplicative decomposition: centred
 *    2 x m moving average, mean ratio per season position, indices normalised to mean 1;
 *  - forecast = last adjusted value, reseasonalised; normal intervals z sigma sqrt(k) with
 *    sigma the root mean square of the one-step naive errors on the adjusted data.
 * Checked against the statsmodels reference forecasts (baselines/naive2.json) in
 * test/bench/competition.test.ts.
 */
import type { Forecast } from './competition-scoring.js'

function autocorrelation(y: readonly number[], lag: number): number {
  const n = y.length
  const mean = y.reduce((a, b) => a + b, 0) / n
  let num = 0
  let den = 0
  for (let t = 0; t < n; t++) den += (y[t]! - mean) ** 2
  for (let t = lag; t < n; t++) num += (y[t]! - mean) * (y[t - lag]! - mean)
  return den === 0 ? 0 : num / den
}

export function passesSeasonalityTest(y: readonly number[], m: number): boolean {
  const n = y.length
  if (m <= 1 || n < 3 * m) return false
  let acc = 1
  for (let k = 1; k < m; k++) acc += 2 * autocorrelation(y, k) ** 2
  return Math.abs(autocorrelation(y, m)) > 1.645 * Math.sqrt(acc / n)
}

/** Multiplicative season indices by position t mod m (mean 1). */
export function classicalIndices(y: readonly number[], m: number): number[] {
  const n = y.length
  const sums = new Array<number>(m).fill(0)
  const counts = new Array<number>(m).fill(0)
  const half = Math.floor(m / 2)
  for (let t = 0; t < n; t++) {
    let trend: number
    if (m % 2 === 0) {
      if (t - half < 0 || t + half >= n) continue
      let s = (y[t - half]! + y[t + half]!) / 2
      for (let j = t - half + 1; j < t + half; j++) s += y[j]!
      trend = s / m
    } else {
      if (t - half < 0 || t + half >= n) continue
      let s = 0
      for (let j = t - half; j <= t + half; j++) s += y[j]!
      trend = s / m
    }
    sums[t % m]! += y[t]! / trend
    counts[t % m]!++
  }
  const raw = sums.map((s, i) => s / counts[i]!)
  const mean = raw.reduce((a, b) => a + b, 0) / m
  return raw.map((r) => r / mean)
}

const Z80 = 1.2815515655446004
const Z95 = 1.959963984540054

export function naive2(y: readonly number[], m: number, h: number): Forecast {
  const n = y.length
  const indices = passesSeasonalityTest(y, m) ? classicalIndices(y, m) : null
  const index = (t: number): number => (indices ? indices[t % m]! : 1)
  const adjusted = y.map((v, t) => v / index(t))
  let sse = 0
  for (let t = 1; t < n; t++) sse += (adjusted[t]! - adjusted[t - 1]!) ** 2
  const sigma = Math.sqrt(sse / (n - 1))
  const last = adjusted[n - 1]!
  const out = { point: [] as number[], lower80: [] as number[], upper80: [] as number[], lower95: [] as number[], upper95: [] as number[] }
  for (let k = 1; k <= h; k++) {
    const s = index(n + k - 1)
    const spread = sigma * Math.sqrt(k)
    out.point.push(last * s)
    out.lower80.push((last - Z80 * spread) * s)
    out.upper80.push((last + Z80 * spread) * s)
    out.lower95.push((last - Z95 * spread) * s)
    out.upper95.push((last + Z95 * spread) * s)
  }
  return out
}
