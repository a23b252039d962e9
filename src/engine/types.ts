/**
 * Shared types of the forecasting engine. Pure data: no I/O anywhere in src/engine.
 *
 * Two layers meet here:
 *  - model fitters (smoothing/, trend/, seasonal/, intermittent/) implement `ModelSpec`;
 *  - selection (select/) runs every eligible `ModelSpec` and returns a `ForecastResult`.
 * Other layers import the engine only through `engine/index.ts`.
 */

export const FREQUENCIES = ['day', 'week', 'month', 'quarter', 'year'] as const
export type Frequency = (typeof FREQUENCIES)[number]

/** Default season length per frequency (common practice). */
export const DEFAULT_SEASON_LENGTH: Readonly<Record<Frequency, number>> = {
  day: 7,
  week: 52,
  month: 12,
  quarter: 4,
  year: 1,
}

export const METRIC_NAMES = ['mae', 'rmse', 'mape', 'smape', 'mase', 'wape'] as const
export type MetricName = (typeof METRIC_NAMES)[number]

/** Candidate models. Ids are ours; the doc comment of each fitter names the published method. */
export const MODEL_NAMES = [
  'naive',
  'seasonal-naive',
  'moving-average',
  'ses',
  'linear-trend',
  'holt',
  'damped-holt',
  'seasonal-index',
  'decomposition',
  'decomposition-cma',
  'holt-winters-additive',
  'holt-winters-multiplicative',
  'holt-winters-additive-damped',
  'holt-winters-multiplicative-damped',
  'seasonal-smoothing-additive',
  'seasonal-smoothing-multiplicative',
  'croston',
  'sba',
  'theta',
] as const
export type ModelName = (typeof MODEL_NAMES)[number]

export type ModelFamily = 'level' | 'trend' | 'seasonal' | 'seasonal-trend' | 'intermittent'

export type ParamValue = number | readonly number[]
export type ModelParams = Readonly<Record<string, ParamValue>>

/** What every model fitter receives besides the series. */
export interface FitContext {
  /** Season length m >= 1 (1 means no seasonality). */
  readonly seasonLength: number
  /**
   * Optional starting point for the optimiser (e.g. the parameters found on the
   * training part, when refitting on the full history). Fitters may ignore it.
   */
  readonly initialParams?: ModelParams
}

/** A fitted model. Plain data plus two pure functions. */
export interface ModelFit {
  readonly model: ModelName
  /** Named parameters: alpha, beta, gamma, phi, slope, intercept, seasonalFactors, window... */
  readonly params: ModelParams
  /**
   * In-sample one-step-ahead fitted values, same length as the fitted series;
   * NaN where the model has no fitted value (e.g. during initialisation).
   */
  readonly fitted: readonly number[]
  /** Point forecasts for steps 1..horizon after the fitted data. Always finite. */
  forecast(horizon: number): number[]
  /**
   * Forecast-error variance for steps 1..horizon from a published analytical
   * formula (Hyndman, Koehler, Ord and Snyder 2008, ch. 6) where one exists.
   * Absent: the caller builds empirical intervals from residuals.
   */
  forecastVariance?(horizon: number): number[]
}

export interface ModelSpec {
  readonly name: ModelName
  readonly family: ModelFamily
  /** Estimated parameters plus initial states; ties in selection go to the smaller. */
  readonly complexity: number
  /** Needs seasonLength >= 2. */
  readonly seasonal: boolean
  /** Needs strictly positive data (multiplicative seasonality). */
  readonly requiresPositive: boolean
  /** Minimum training length for this season length. */
  minLength(seasonLength: number): number
  /** @throws EngineInputError on input it cannot fit (callers skip the model with the reason). */
  fit(series: readonly number[], ctx: FitContext): ModelFit
}

/** One series as given to the engine. `null` marks a missing period. */
export interface SeriesInput {
  readonly values: readonly (number | null)[]
  readonly frequency: Frequency
  /** Label of the first period: `2024`, `2024-Q2`, `2024-03`, `2024-W09`, `2024-03-05`. */
  readonly start?: string
  readonly seasonLength?: number
  readonly horizon: number
  /** Periods held back for selection. Default: min(horizon, seasonLength), bounded by history. */
  readonly holdout?: number
  readonly metric?: MetricName
  readonly models?: readonly ModelName[]
  /** Interval levels in percent, each in (0, 100). Default [80, 95]. */
  readonly intervals?: readonly number[]
  readonly fillPolicy?: 'zero' | 'interpolate'
  readonly allowNegative?: boolean
  readonly keepLeadingZeros?: boolean
  /** Rolling forecast origins used in selection. Default 1. */
  readonly origins?: number
}

export interface EngineWarning {
  readonly code: string
  readonly message: string
}

/** Error measures of a forecast against actuals; null where undefined (e.g. MAPE with zero actuals). */
export type MetricSet = Readonly<Record<MetricName, number | null>>

export interface LeaderboardEntry {
  readonly model: ModelName
  readonly family: ModelFamily
  readonly status: 'scored' | 'skipped' | 'failed'
  /** Holdout (or in-sample) errors on every metric. */
  readonly metrics?: MetricSet
  /** The value of the selection metric (lower is better). */
  readonly score?: number
  readonly reason?: string
}

export interface ForecastPoint {
  /** Period label following `start`; without `start`, the 1-based period number as a string. */
  readonly period: string
  readonly value: number
  /** Interval bounds keyed by level in percent, e.g. { "80": 12.1, "95": 9.4 }. */
  readonly lower: Readonly<Record<string, number>>
  readonly upper: Readonly<Record<string, number>>
}

export interface ForecastResult {
  readonly model: ModelName
  readonly family: ModelFamily
  readonly params: ModelParams
  readonly selection: {
    readonly method: 'holdout' | 'in-sample' | 'none'
    readonly metric: MetricName
    readonly holdout: number
    readonly origins: number
  }
  /** Holdout errors of the winner (in-sample errors when selection.method is 'in-sample'). */
  readonly metrics: MetricSet | null
  /** In-sample one-step fitted values on the prepared history (null where undefined). */
  readonly fitted: readonly (number | null)[]
  readonly residuals: { readonly count: number; readonly mean: number; readonly sd: number; readonly mae: number }
  readonly forecast: readonly ForecastPoint[]
  readonly intervals: {
    readonly method: 'analytical' | 'empirical' | 'none'
    readonly levels: readonly number[]
    /** Some lower bound was raised to zero (demand cannot be negative). */
    readonly clamped: boolean
  }
  readonly leaderboard: readonly LeaderboardEntry[]
  readonly warnings: readonly EngineWarning[]
  readonly history: {
    /** Periods given. */
    readonly length: number
    /** Periods used after trimming leading zeros. */
    readonly used: number
    readonly missing: number
    readonly trimmedLeadingZeros: number
    /** Label of the first period used. */
    readonly firstPeriod: string
  }
}
