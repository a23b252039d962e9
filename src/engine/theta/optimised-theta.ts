/**
 * 'optimised-theta': the optimised Theta model (OTM) of Fiorucci, Pellegrini, Louzada,
 * Petropoulos and Koehler (2016), IJF 32(4). The standard Theta method fixes theta = 2
 * (the combination weight of the theta line); here theta, alpha and l_0 are estimated:
 *   mu_t = l_{t-1} + (1 - 1/theta) [ (1 - alpha)^{t-1} A_n + (1 - (1 - alpha)^t) / alpha * B_n ]
 *   l_t  = alpha Y_t + (1 - alpha) l_{t-1}
 * with A_n, B_n the least-squares line of all n (seasonally adjusted) values.
 * Equations and forecasts: core.ts. Seasonal adjustment as 'theta'.
 */
import type { FitContext, ModelSpec } from '../types.js'
import { fitOptimisedTheta, MIN_LENGTH } from './fit.js'

export const optimisedTheta: ModelSpec = {
  name: 'optimised-theta',
  family: 'trend',
  complexity: 4,
  seasonal: false,
  requiresPositive: false,
  minLength: () => MIN_LENGTH,
  fit: (series: readonly number[], ctx: FitContext) => fitOptimisedTheta('optimised-theta', false, series, ctx.seasonLength),
}
