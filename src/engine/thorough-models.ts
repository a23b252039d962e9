/**
 * The stronger, slower candidates for the thorough model search, gathered in one list
 * (the fast default search uses MODEL_REGISTRY in models.ts). Each family lives in its
 * own folder and exports its `ModelSpec`s.
 */
import { arimaModels } from './arima/index.js'
import { combinationModels } from './combination/index.js'
import { stateSpaceModels } from './state-space/index.js'
import { thetaModels } from './theta/index.js'
import type { ModelSpec } from './types.js'

export const thoroughModels: readonly ModelSpec[] = [...stateSpaceModels, ...thetaModels, ...combinationModels, ...arimaModels]
