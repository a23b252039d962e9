/**
 * Intermittent-demand family. Complexity 3 for both (alpha, initial size,
 * initial interval; common practice for tie-breaking, no source).
 */
import type { ModelSpec } from '../types.js'
import { croston, sba } from './croston.js'

export const intermittentModels: readonly ModelSpec[] = [croston, sba]

export { fitCroston, CROSTON_ALPHAS, type CrostonOptions, type CrostonVariant } from './croston.js'
export { classifyDemand, ADI_CUTOFF, CV2_CUTOFF, type DemandClass, type DemandClassification } from './classify.js'
