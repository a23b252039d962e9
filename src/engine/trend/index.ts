/**
 * Trend family (with the two level benchmarks). Complexity counts estimated
 * quantities (common practice for tie-breaking, no source): naive 0,
 * moving-average 1 (window), linear-trend 2 (slope, intercept), theta 3
 * (alpha, level, drift; seasonal factors, when used, are not counted),
 * last-value-drift 1 (the drift).
 */
import type { ModelSpec } from '../types.js'
import { drift } from './drift.js'
import { linearTrend } from './linear-trend.js'
import { movingAverage } from './moving-average.js'
import { naive } from './naive.js'
import { theta } from './theta.js'

export const trendModels: readonly ModelSpec[] = [naive, movingAverage, linearTrend, theta, drift]

export { fitLinearTrend, fitTrendOnIndex, fitLinearTrendModel, type LinearTrendFit } from './linear-trend.js'
export { fitMovingAverage } from './moving-average.js'
export { fitDrift } from './drift.js'
export { fitNaive } from './naive.js'
export { fitTheta, isSeasonal, type ThetaOptions } from './theta.js'
