/** Model selection and the forecastSeries entry point. */
export { forecastSeries, forecastSeriesWith, type EngineModels } from './forecast-series.js'
export { defaultHoldout, defaultHoldoutOrigins, planHoldout, type HoldoutPlan } from './holdout.js'
export { rankEvaluations, TIE_TOLERANCE } from './rank.js'
