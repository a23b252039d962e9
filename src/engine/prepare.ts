/**
 * Input validation and data preparation: the first step of `forecastSeries`.
 *
 * 1. Validate options and demand (EngineInputError with a code and the field).
 * 2. Fill missing (null) periods (`missingPeriods`): 'zero' (default) or 'interpolate' (linear between the
 *    nearest known neighbours; leading/trailing gaps take the nearest known value).
 * 3. Trim zeros before the first non-zero period (unless keepLeadingZeros); the first
 *    period label moves forward by the number trimmed. An all-zero history is kept whole.
 * 4. Flag a constant (or all-zero) history: it gets a flat forecast without selection.
 *
 * Every action that changes the data is reported as an EngineWarning.
 */
import { EngineInputError } from './errors.js'
import { isConstant } from './numeric.js'
import { defaultHoldoutOrigins } from './select/holdout.js'
import { SEARCH } from './select/pools.js'
import { periodLabels } from './periods.js'
import {
  DEFAULT_SEASON_LENGTH,
  FREQUENCIES,
  METRIC_NAMES,
  MODEL_NAMES,
  type EngineWarning,
  type Frequency,
  type MetricName,
  type ModelName,
  type ModelSearch,
  MODEL_SEARCHES,
  type SeriesInput,
} from './types.js'

/** Limits the engine enforces itself (the HTTP schema may be stricter). */
export const ENGINE_LIMITS = {
  maxHorizon: 1000,
  maxSeasonLength: 366,
  maxHoldout: 1000,
  maxOrigins: 12,
  maxLevels: 10,
  maxQuantiles: 20,
} as const

/** Fewer points than this: the history cannot tell models apart (warning `short-history`). */
export const SHORT_HISTORY = 10

export const DEFAULT_LEVELS: readonly number[] = [80, 95]

export interface PreparedSeries {
  /** History after filling and trimming: finite, and non-negative unless allowNegativeDemand. */
  readonly values: readonly number[]
  readonly frequency: Frequency
  readonly firstPeriod?: string
  readonly seasonLength: number
  readonly horizon: number
  /** As given; the default is chosen in select/holdout.ts. */
  readonly holdoutPeriods?: number
  readonly rankBy: MetricName
  /** As given (deduplicated); undefined means "all the history allows". */
  readonly models?: readonly ModelName[]
  /** Sorted ascending, deduplicated. */
  readonly levels: readonly number[]
  /** Requested quantiles, sorted ascending, deduplicated (empty when none). */
  readonly quantiles: readonly number[]
  readonly modelSearch: ModelSearch
  readonly allowNegativeDemand: boolean
  readonly holdoutOrigins: number
  /** Origins the request asked for (1 when absent): fewer than this is worth a warning, fewer than the search's minimum is not. */
  readonly requestedOrigins: number
  /** Periods trimmed from the front: labels of `values[0]` = firstPeriod + offset. */
  readonly offset: number
  /** 'all-zero' or 'constant' history: flat forecast, no selection. */
  readonly flat: 'all-zero' | 'constant' | null
  readonly history: {
    readonly length: number
    readonly used: number
    readonly missing: number
    readonly trimmedLeadingZeros: number
    readonly firstPeriod: string
  }
  readonly warnings: readonly EngineWarning[]
}

function option(message: string, field: string): EngineInputError {
  return new EngineInputError('invalid-option', message, field)
}

function intIn(value: number | undefined, lo: number, hi: number, field: string): void {
  if (value === undefined) return
  if (!Number.isInteger(value) || value < lo || value > hi) {
    throw option(`${field} must be an integer from ${lo} to ${hi} (got ${value})`, field)
  }
}

function validateOptions(input: SeriesInput): void {
  if (!FREQUENCIES.includes(input.frequency)) {
    throw option(`frequency must be one of ${FREQUENCIES.join(', ')}`, 'frequency')
  }
  if (input.horizon === undefined) throw option('horizon is required', 'horizon')
  intIn(input.horizon, 1, ENGINE_LIMITS.maxHorizon, 'horizon')
  intIn(input.seasonLength, 1, ENGINE_LIMITS.maxSeasonLength, 'seasonLength')
  intIn(input.holdoutPeriods, 1, ENGINE_LIMITS.maxHoldout, 'holdoutPeriods')
  intIn(input.holdoutOrigins, 1, ENGINE_LIMITS.maxOrigins, 'holdoutOrigins')
  if (input.rankBy !== undefined && !METRIC_NAMES.includes(input.rankBy)) {
    throw option(`rankBy must be one of ${METRIC_NAMES.join(', ')}`, 'rankBy')
  }
  if (input.missingPeriods !== undefined && input.missingPeriods !== 'zero' && input.missingPeriods !== 'interpolate') {
    throw option(`missingPeriods must be 'zero' or 'interpolate'`, 'missingPeriods')
  }
  if (input.models !== undefined) {
    if (input.models.length === 0) throw option('models must list at least one model', 'models')
    input.models.forEach((m, i) => {
      if (!MODEL_NAMES.includes(m)) throw option(`unknown model "${m}"`, `models[${i}]`)
    })
    const members = input.models.filter((m) => m !== 'shortlist-combination')
    if (members.length < input.models.length && new Set(members).size < 2) {
      throw option('shortlist-combination combines the best of the other listed models: list at least two more, or leave models unset', 'models')
    }
  }
  if (input.intervalLevels !== undefined) {
    if (input.intervalLevels.length > ENGINE_LIMITS.maxLevels) {
      throw option(`intervalLevels may list at most ${ENGINE_LIMITS.maxLevels} levels`, 'intervalLevels')
    }
    input.intervalLevels.forEach((level, i) => {
      if (typeof level !== 'number' || !(level > 0 && level < 100)) {
        throw option(`an interval level must be a percentage strictly between 0 and 100 (got ${level})`, `intervalLevels[${i}]`)
      }
    })
  }
}

function validateQuantiles(input: SeriesInput): void {
  if (input.modelSearch !== undefined && !MODEL_SEARCHES.includes(input.modelSearch)) {
    throw option(`modelSearch must be one of ${MODEL_SEARCHES.join(', ')}`, 'modelSearch')
  }
  if (input.quantiles === undefined) return
  if (!Array.isArray(input.quantiles) || input.quantiles.length > ENGINE_LIMITS.maxQuantiles) {
    throw option(`quantiles may list at most ${ENGINE_LIMITS.maxQuantiles} values`, 'quantiles')
  }
  input.quantiles.forEach((q, i) => {
    if (typeof q !== 'number' || !(q > 0 && q < 1)) {
      throw option(`a quantile must be a number strictly between 0 and 1 (got ${q})`, `quantiles[${i}]`)
    }
  })
}

function validateDemand(demand: readonly (number | null)[], allowNegativeDemand: boolean): void {
  if (!Array.isArray(demand) || demand.length === 0) {
    throw new EngineInputError('empty-series', 'demand must hold at least one period', 'demand')
  }
  let known = 0
  demand.forEach((v, i) => {
    if (v === null) return
    if (typeof v !== 'number' || !Number.isFinite(v)) {
      throw new EngineInputError('non-finite-value', `demand[${i}] must be a finite number or null`, `demand[${i}]`)
    }
    if (v < 0 && !allowNegativeDemand) {
      throw new EngineInputError(
        'negative-value',
        `demand[${i}] is negative (${v}); demand cannot be negative unless allowNegativeDemand is set`,
        `demand[${i}]`,
      )
    }
    known++
  })
  if (known === 0) throw new EngineInputError('empty-series', 'demand holds no known (non-null) period', 'demand')
}

/** Fill nulls. Interpolation is linear between the nearest known neighbours. */
export function fillMissing(values: readonly (number | null)[], policy: 'zero' | 'interpolate'): number[] {
  const out = values.map((v) => (v === null ? NaN : v))
  if (policy === 'zero') return out.map((v) => (Number.isNaN(v) ? 0 : v))
  const known: number[] = []
  out.forEach((v, i) => {
    if (!Number.isNaN(v)) known.push(i)
  })
  let k = 0
  for (let i = 0; i < out.length; i++) {
    if (!Number.isNaN(out[i])) continue
    while (k < known.length && known[k]! < i) k++
    const right = k < known.length ? known[k]! : -1
    const left = k > 0 ? known[k - 1]! : -1
    if (left < 0) out[i] = out[right]!
    else if (right < 0) out[i] = out[left]!
    else out[i] = out[left]! + ((out[right]! - out[left]!) * (i - left)) / (right - left)
  }
  return out
}

/** Validate and prepare one series. @throws EngineInputError with a code and field. */
export function prepareSeries(input: SeriesInput): PreparedSeries {
  validateOptions(input)
  validateQuantiles(input)
  const allowNegativeDemand = input.allowNegativeDemand === true
  validateDemand(input.demand, allowNegativeDemand)
  const warnings: EngineWarning[] = []
  // Validates `firstPeriod` against the frequency before any work is done.
  const firstLabel = periodLabels(input.frequency, input.firstPeriod, 1)[0]!

  const missing = input.demand.filter((v) => v === null).length
  const policy = input.missingPeriods ?? 'zero'
  let values = fillMissing(input.demand, policy)
  if (missing > 0) {
    warnings.push({
      code: 'missing-filled',
      message: `${missing} missing period(s) filled ${policy === 'zero' ? 'with zero' : 'by linear interpolation'}`,
    })
  }

  let trimmed = 0
  const firstSale = values.findIndex((v) => v !== 0)
  if (!input.keepLeadingZeros && firstSale > 0) {
    trimmed = firstSale
    values = values.slice(firstSale)
    warnings.push({
      code: 'leading-zeros-trimmed',
      message: `${trimmed} zero period(s) before the first non-zero period were dropped`,
    })
  }

  const flat = !isConstant(values) ? null : values[0] === 0 ? 'all-zero' : 'constant'
  const seasonLength = input.seasonLength ?? DEFAULT_SEASON_LENGTH[input.frequency]
  warnings.push(...historyWarnings(values.length, seasonLength))
  const levels = [...new Set(input.intervalLevels ?? DEFAULT_LEVELS)].sort((a, b) => a - b)
  return {
    values,
    frequency: input.frequency,
    firstPeriod: input.firstPeriod,
    seasonLength,
    horizon: input.horizon,
    holdoutPeriods: input.holdoutPeriods,
    rankBy: input.rankBy ?? 'mase',
    models: input.models === undefined ? undefined : [...new Set(input.models)],
    levels,
    quantiles: [...new Set(input.quantiles ?? [])].sort((a, b) => a - b),
    modelSearch: input.modelSearch ?? 'fast',
    allowNegativeDemand,
    // A search's origins are a minimum; unset, the horizon's count without a season, else 1 (holdout.ts).
    holdoutOrigins: Math.max(
      input.holdoutOrigins ?? defaultHoldoutOrigins(seasonLength, input.horizon, ENGINE_LIMITS.maxOrigins),
      SEARCH[input.modelSearch ?? 'fast'].holdoutOrigins,
    ),
    requestedOrigins: input.holdoutOrigins ?? 1,
    offset: trimmed,
    flat,
    history: {
      length: input.demand.length,
      used: values.length,
      missing,
      trimmedLeadingZeros: trimmed,
      firstPeriod: trimmed === 0 ? firstLabel : periodLabels(input.frequency, input.firstPeriod, 1, trimmed)[0]!,
    },
    warnings,
  }
}

/**
 * Warnings for histories too short to trust: fewer than SHORT_HISTORY points (too few to
 * tell a trend from noise or one model from another), and fewer than two full seasons
 * (a season cannot be seen in less: seasonal models are not tried).
 */
function historyWarnings(used: number, seasonLength: number): EngineWarning[] {
  const out: EngineWarning[] = []
  if (used < SHORT_HISTORY) {
    out.push({
      code: 'short-history',
      message: `the history has ${used} period(s), fewer than ${SHORT_HISTORY}: the model cannot be checked well and the intervals were widened for that`,
    })
  }
  if (seasonLength > 1 && used < 2 * seasonLength) {
    out.push({
      code: 'fewer-than-two-seasons',
      message: `seasonal models need two full seasons (${2 * seasonLength} periods), the history has ${used}: any seasonality is not modelled`,
    })
  }
  return out
}
