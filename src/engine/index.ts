/** The engine's public surface. Other layers import the engine only from here. */
export * from './types.js'
export { EngineInputError, type EngineErrorCode } from './errors.js'
export { forecastSeries } from './select/index.js'
export { prepareSeries, fillMissing, ENGINE_LIMITS, DEFAULT_LEVELS, type PreparedSeries } from './prepare.js'
export { periodLabels, nextPeriods, parsePeriod, formatPeriod, isoWeeksInYear } from './periods.js'
export { computeMetrics, maseScale } from './metrics.js'
export { normalQuantile } from './intervals.js'
export { MODEL_REGISTRY, findModel, type DemandClassification } from './models.js'
