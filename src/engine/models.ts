/**
 * The model registry: every fitter the engine can select from, in one list.
 * Each family lives in its own folder and exports its `ModelSpec`s; this file only
 * gathers them. Order matters only as the last tie-break in selection.
 */
import { intermittentModels } from './intermittent/index.js'
import { seasonalModels } from './seasonal/index.js'
import { smoothingModels } from './smoothing/index.js'
import { trendModels } from './trend/index.js'
import type { ModelName, ModelSpec } from './types.js'

export { classifyDemand, type DemandClassification, type DemandClass } from './intermittent/index.js'

export const MODEL_REGISTRY: readonly ModelSpec[] = [
  ...trendModels,
  ...smoothingModels,
  ...seasonalModels,
  ...intermittentModels,
]

export function findModel(name: ModelName): ModelSpec | undefined {
  return MODEL_REGISTRY.find((spec) => spec.name === name)
}
