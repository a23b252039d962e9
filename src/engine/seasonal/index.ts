/**
 * Seasonal model family. Complexity counts estimated quantities, a whole set of
 * seasonal factors counting as one (common practice for tie-breaking, no source):
 * seasonal-naive 0 (nothing estimated), seasonal-index 3 (alpha, level, factors),
 * decomposition and decomposition-cma 3 (slope, intercept, factors).
 */
import type { ModelSpec } from '../types.js'
import { decomposition, decompositionCma } from './trend-times-factor.js'
import { seasonalIndex } from './seasonal-index.js'
import { seasonalNaive } from './seasonal-naive.js'

export const seasonalModels: readonly ModelSpec[] = [seasonalNaive, seasonalIndex, decomposition, decompositionCma]

export { decomposeClassical, seasonalPositionFactors } from './decompose.js'
export type { ClassicalDecomposition, DecompositionType } from './decompose.js'
export { fitSeasonalNaive } from './seasonal-naive.js'
export { fitSeasonalIndex } from './seasonal-index.js'
export { fitDecomposition, fitDecompositionCma, fitTrendTimesFactor } from './trend-times-factor.js'
