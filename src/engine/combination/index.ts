/** Forecast combinations: see median-combination.ts. */
import type { ModelSpec } from '../types.js'
import { medianCombination } from './median-combination.js'

export { fitMedianCombination, fitAdjustedDamped, medianOf, medianCombination, type CombinationFit } from './median-combination.js'

export const combinationModels: readonly ModelSpec[] = [medianCombination]
