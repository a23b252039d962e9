/** The engine's public surface. Other layers import the engine only from here. */
export * from './types.js'
export { EngineInputError, type EngineErrorCode } from './errors.js'
export { forecastSeries } from './select/index.js'
export { prepareSeries, fillMissing, ENGINE_LIMITS, DEFAULT_LEVELS, type PreparedSeries } from './prepare.js'
export { periodLabels, nextPeriods, parsePeriod, formatPeriod, isoWeeksInYear } from './periods.js'
export { computeMetrics, maseScale } from './metrics.js'
export { normalQuantile } from './intervals.js'
export { MODEL_REGISTRY, findModel, type DemandClassification } from './models.js'
export { THOROUGH_EXTRA, LISTABLE_MODELS, SEARCH } from './select/pools.js'
export { defaultHoldoutOrigins } from './select/holdout.js'
export { SHORTLIST_COMBINATION } from './combination/shortlist-combination.js'
export {
  computeReplenishment,
  replenishmentFor,
  checkReplenishmentOptions,
  SERVICE_LEVEL_MIN,
  SERVICE_LEVEL_MAX,
  REPLENISHMENT_FORMULA,
  type ReplenishmentOptions,
  type ReplenishmentFigures,
  type ReplenishmentPeriod,
} from './replenishment.js'
export {
  summariseAccuracy,
  smoothedTrackingSignals,
  smoothedTrackingLimit,
  minScoredPeriods,
  poolAccuracy,
  pairsAtLag,
  TRACKING_SIGNAL_LIMIT,
  TRACKING_SMOOTHING_WEIGHT,
  type ScoredPeriod,
  type AccuracySummary,
  type TrackingOptions,
  type TrackingFlag,
  type PooledAccuracy,
  type IssuedForecast,
  type LaggedPair,
} from './tracking.js'
