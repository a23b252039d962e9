/** Optimised Theta models (Fiorucci et al. 2016): see optimised-theta.ts and dynamic-optimised-theta.ts. */
import type { ModelSpec } from '../types.js'
import { dynamicOptimisedTheta } from './dynamic-optimised-theta.js'
import { optimisedTheta } from './optimised-theta.js'

export { fitOptimisedTheta, type ThetaFitOptions } from './fit.js'
export { estimateTheta, lineOnIndex, runTheta, thetaForecast, type ThetaParams } from './core.js'
export { optimisedTheta, dynamicOptimisedTheta }

export const thetaModels: readonly ModelSpec[] = [optimisedTheta, dynamicOptimisedTheta]
