/**
 * Seasonal decompositions used by the seasonal models and by Theta.
 *
 * `decomposeClassical` is classical decomposition by moving averages, the same
 * procedure as base R `stats::decompose` (R 4.x source): a centred moving average
 * of order m (weights [1/2, 1, ..., 1, 1/2]/m for even m, 1/m each for odd m) as
 * trend, ratios (multiplicative) or differences (additive) to it, the mean of each
 * season position over the available ratios, and the figure normalised to average 1
 * (multiplicative) or 0 (additive). Positions count from the first value of the
 * series (index t has position t mod m), as R does.
 *
 * `seasonalPositionFactors` is the simple ratio-to-overall-average method: the
 * mean of each season position divided by the mean of those means.
 */
import { EngineInputError } from '../errors.js'
import { checkFinite, checkSeasonLength, checkSeries } from '../trend/guards.js'

export type DecompositionType = 'multiplicative' | 'additive'

export interface ClassicalDecomposition {
  readonly type: DecompositionType
  readonly seasonLength: number
  /** Centred moving average; NaN at the floor(m/2) points at each end where it is undefined. */
  readonly trend: number[]
  /** One seasonal term per position 0..m-1 (R's `figure`). */
  readonly figure: number[]
  /** The figure repeated over the series (R's `seasonal`). */
  readonly seasonal: number[]
  /** series / (trend * seasonal) or series - trend - seasonal; NaN where trend is. */
  readonly random: number[]
}

/**
 * Classical decomposition (R `stats::decompose` semantics).
 * @throws EngineInputError 'invalid-option' if seasonLength < 2, 'series-too-short'
 *   below two full seasons, and for 'multiplicative' 'not-positive' when a value is
 *   negative, a moving average is not positive, or a seasonal factor comes out zero.
 */
export function decomposeClassical(
  series: readonly number[],
  seasonLength: number,
  type: DecompositionType,
): ClassicalDecomposition {
  const m = seasonLength
  checkSeasonLength(m, 'classical decomposition')
  checkSeries(series, 'classical decomposition', 2 * m)
  const n = series.length
  const multiplicative = type === 'multiplicative'
  if (multiplicative) requireNonNegative(series, 'classical decomposition')
  const even = m % 2 === 0
  const half = Math.floor(m / 2)
  const filterLength = even ? m + 1 : m
  const trend = new Array<number>(n).fill(NaN)
  const inner = 1 / m
  const edge = even ? 0.5 / m : inner
  // Same summation order as R's C_cfilter: sum over j of filter[j] * x[t + half - j].
  for (let t = half; t < n - half; t++) {
    let s = 0
    for (let j = 0; j < filterLength; j++) {
      const w = j === 0 || j === filterLength - 1 ? edge : inner
      s += w * series[t + half - j]!
    }
    trend[t] = s
  }
  const figure = new Array<number>(m).fill(0)
  const counts = new Array<number>(m).fill(0)
  for (let t = half; t < n - half; t++) {
    let ratio: number
    if (multiplicative) {
      if (!(trend[t]! > 0)) {
        throw new EngineInputError('not-positive', 'classical decomposition (multiplicative) needs positive moving averages (a full season of zeros was found)')
      }
      ratio = series[t]! / trend[t]!
    } else {
      ratio = series[t]! - trend[t]!
    }
    figure[t % m]! += ratio
    counts[t % m]! += 1
  }
  let figureMean = 0
  for (let j = 0; j < m; j++) {
    figure[j]! /= counts[j]!
    figureMean += figure[j]!
  }
  figureMean /= m
  for (let j = 0; j < m; j++) {
    figure[j] = multiplicative ? figure[j]! / figureMean : figure[j]! - figureMean
    if (multiplicative && !(figure[j]! > 0)) {
      throw new EngineInputError('not-positive', `multiplicative decomposition found a seasonal factor of zero at position ${j + 1}`)
    }
  }
  checkFinite(figure, 'classical decomposition')
  const seasonal = new Array<number>(n)
  const random = new Array<number>(n)
  for (let t = 0; t < n; t++) {
    seasonal[t] = figure[t % m]!
    random[t] = multiplicative ? series[t]! / seasonal[t]! / trend[t]! : series[t]! - seasonal[t]! - trend[t]!
  }
  return { type, seasonLength: m, trend, figure, seasonal, random }
}

/**
 * Ratio-to-overall-average factors: mean of the values at each position t mod m,
 * divided by the mean of the m position means (so the factors average 1; with whole
 * seasons this is the plain overall mean).
 * @throws EngineInputError 'not-positive' on negative values, a non-positive overall
 *   mean, or a position whose values are all zero (its factor would be 0).
 */
export function seasonalPositionFactors(series: readonly number[], seasonLength: number): number[] {
  const m = seasonLength
  checkSeasonLength(m, 'seasonal factors')
  checkSeries(series, 'seasonal factors', 2 * m)
  requireNonNegative(series, 'seasonal factors')
  const factors = new Array<number>(m).fill(0)
  const counts = new Array<number>(m).fill(0)
  for (let t = 0; t < series.length; t++) {
    factors[t % m]! += series[t]!
    counts[t % m]! += 1
  }
  let overall = 0
  for (let j = 0; j < m; j++) {
    factors[j]! /= counts[j]!
    overall += factors[j]!
  }
  overall /= m
  for (let j = 0; j < m; j++) {
    factors[j]! /= overall
    if (!(factors[j]! > 0) || !Number.isFinite(factors[j])) {
      throw new EngineInputError('not-positive', `seasonal factors require positive data; season position ${j + 1} averages zero`)
    }
  }
  return factors
}

function requireNonNegative(series: readonly number[], method: string): void {
  for (let i = 0; i < series.length; i++) {
    if (series[i]! < 0) {
      throw new EngineInputError('not-positive', `${method} (multiplicative) needs demand of zero or more`, `demand[${i}]`)
    }
  }
}

