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

/**
 * Candidate models. Ids are ours, spelled out in one pattern,
 * `[damped-]<base>[-<season treatment>]`; eponymous published methods keep the
 * method's name (theta, croston). The doc comment of each fitter names the method.
 */
export const MODEL_NAMES = [
  'last-value',
  'last-season',
  'moving-average',
  'level-smoothing',
  'linear-trend',
  'trend-smoothing',
  'damped-trend-smoothing',
  'level-smoothing-season-averages',
  'linear-trend-season-averages',
  'linear-trend-season-ratios',
  'trend-smoothing-additive-season',
  'trend-smoothing-multiplicative-season',
  'damped-trend-smoothing-additive-season',
  'damped-trend-smoothing-multiplicative-season',
  'level-smoothing-additive-season',
  'level-smoothing-multiplicative-season',
  'croston',
  'croston-bias-corrected',
  'theta',
  'optimised-theta',
  'dynamic-optimised-theta',
  'state-space-smoothing',
  'median-combination',
  'auto-arima',
  'shortlist-combination',
  'last-value-drift',
] as const
export type ModelName = (typeof MODEL_NAMES)[number]

export type ModelFamily = 'level' | 'trend' | 'seasonal' | 'seasonal-trend' | 'intermittent' | 'combination'

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
  /**
   * Named parameters; one key means one thing in every model: levelWeight (alpha),
   * trendWeight (beta), seasonWeight (gamma), damping (phi), startLevel, startTrend,
   * startSeason, seasonFactors, seasonOffsets, slope, intercept, window, level...
   */
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
  /**
   * In the default pool only for frequencies without a season (season length 1); a request
   * that lists the model in `models` gets it at any season length. Absent: always.
   */
  readonly defaultOnlyWithoutSeason?: boolean
  /** Minimum training length for this season length. */
  minLength(seasonLength: number): number
  /** @throws EngineInputError on input it cannot fit (callers skip the model with the reason). */
  fit(series: readonly number[], ctx: FitContext): ModelFit
}

/** One series as given to the engine. `null` marks a missing period. */
export interface SeriesInput {
  /** Demand per period, oldest first. */
  readonly demand: readonly (number | null)[]
  readonly frequency: Frequency
  /** Label of the first period: `2024`, `2024-Q2`, `2024-03`, `2024-W09`, `2024-03-05`. */
  readonly firstPeriod?: string
  readonly seasonLength?: number
  readonly horizon: number
  /** Periods held back for selection. Default: min(horizon, seasonLength), bounded by history. */
  readonly holdoutPeriods?: number
  /** The holdout error that ranks candidates. Default mase. */
  readonly rankBy?: MetricName
  readonly models?: readonly ModelName[]
  /** Central prediction-interval levels in percent, each in (0, 100). Default [80, 95]. */
  readonly intervalLevels?: readonly number[]
  readonly missingPeriods?: 'zero' | 'interpolate'
  readonly allowNegativeDemand?: boolean
  readonly keepLeadingZeros?: boolean
  /** Rolling forecast origins used in selection. Default: the horizon's count (at most 12) for a season length of 1, else 1. */
  readonly holdoutOrigins?: number
  /** Quantiles in (0, 1) to report per forecast point, e.g. [0.5, 0.9, 0.95]; at most 20. */
  readonly quantiles?: readonly number[]
  /**
   * 'fast' (default): the default candidate pool, a few calibration origins. 'thorough':
   * at least 3 rolling holdout origins, more calibration origins and the wider pool
   * (select/pools.ts); slower.
   */
  readonly modelSearch?: ModelSearch
}

export const MODEL_SEARCHES = ['fast', 'thorough'] as const
export type ModelSearch = (typeof MODEL_SEARCHES)[number]

export interface EngineWarning {
  readonly code: string
  readonly message: string
}

/**
 * Error measures of a forecast against actuals; null where undefined (e.g. MAPE with zero
 * actuals). `msis` and `pinball` judge the intervals (metrics.ts) and are null where the
 * forecast has none; they are not ranking measures.
 */
export type MetricSet = Readonly<Record<MetricName, number | null>> & {
  readonly msis?: number | null
  readonly pinball?: number | null
}

/** One row of a result's candidate table. */
export interface Candidate {
  readonly model: ModelName
  readonly family: ModelFamily
  readonly status: 'scored' | 'skipped' | 'failed'
  /** Holdout (or in-sample) errors on every measure. */
  readonly holdoutErrors?: MetricSet
  /** The value of the ranking measure, `rankBy` (lower is better). */
  readonly score?: number
  readonly reason?: string
}

/** A central prediction interval at `level` percent. */
export interface ForecastInterval {
  readonly level: number
  readonly low: number
  readonly high: number
}

export interface ForecastPoint {
  /** Period label following `firstPeriod`; without it, the 1-based period number as a string. */
  readonly period: string
  readonly demand: number
  /** One interval per requested level, ascending. */
  readonly intervals: readonly ForecastInterval[]
  /** One value per requested quantile, ascending; present only when quantiles were requested. */
  readonly quantiles?: readonly ForecastQuantile[]
}

/** The demand that actual demand stays at or below with probability `quantile`. */
export interface ForecastQuantile {
  readonly quantile: number
  readonly demand: number
}

export type IntervalMethod = 'analytical' | 'empirical' | 'calibrated' | 'none'

export interface ModelChoice {
  readonly method: 'holdout' | 'in-sample' | 'none'
  readonly rankBy: MetricName
  readonly holdoutPeriods: number
  readonly holdoutOrigins: number
  /**
   * For model 'shortlist-combination' only: the models averaged, with their families (the
   * AICc pick first; the candidates table lists them right after the combination).
   */
  readonly members?: readonly { readonly model: ModelName; readonly family: ModelFamily }[]
}

export interface ForecastResult {
  readonly model: ModelName
  readonly family: ModelFamily
  readonly params: ModelParams
  readonly modelChoice: ModelChoice
  /** Holdout errors of the winner (in-sample errors when modelChoice.method is 'in-sample'). */
  readonly holdoutErrors: MetricSet | null
  /** In-sample one-step fitted values on the prepared history (null where undefined). */
  readonly fitted: readonly (number | null)[]
  readonly residuals: { readonly count: number; readonly mean: number; readonly sd: number; readonly mae: number }
  readonly forecast: readonly ForecastPoint[]
  /** How the intervals were made; lower bounds raised to zero are reported by the warning `intervals-raised-to-zero`. */
  readonly intervalMethod: IntervalMethod
  /**
   * Standard deviation of the forecast error per step 1..horizon, as the intervals use it
   * (the model's own h-step variance when it has one, else sigma_1 · sqrt(h); 0 for method 'none').
   */
  readonly stepSd: readonly number[]
  readonly candidates: readonly Candidate[]
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
