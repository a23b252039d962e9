/** Typed loader for test/engine/fixtures/statsmodels/smoothing.json (made by scripts/fixtures/statsmodels_smoothing.py). */
import { readFileSync } from 'node:fs'

export interface RecursionCase {
  name: string
  data: string
  model: 'ses' | 'holt' | 'holt-winters'
  seasonal: 'add' | 'mul' | null
  seasonLength: number | null
  alpha: number
  beta: number | null
  gamma: number | null
  phi: number | null
  initial: { level: number; trend: number | null; seasonal: number[] | null }
  series: number[]
  fitted: number[]
  forecast: number[]
  sse: number
  /** States after the last observation; seasonal[k] applies to period n + 1 + k. */
  final: { level: number; trend: number | null; seasonal: number[] | null }
  /** Seasonal cases: ETSModel (additive error) with the same parameters and states. */
  etsFitted?: number[]
  etsForecast?: number[]
}

export interface OptimisedCase {
  data: string
  model: string
  seasonLength: number
  series: number[]
  sse: number
}

export interface VarianceCase {
  model: string
  alpha: number
  betaErrorCorrection: number
  gamma: number
  phi: number | null
  seasonLength: number
  relativeVariance: number[]
}

export interface SmoothingFixture {
  statsmodelsVersion: string
  recursions: RecursionCase[]
  optimised: OptimisedCase[]
  variance: VarianceCase[]
}

export const smoothingFixture: SmoothingFixture = JSON.parse(
  readFileSync(new URL('../fixtures/statsmodels/smoothing.json', import.meta.url), 'utf8'),
)
