/**
 * 'dynamic-optimised-theta': the dynamic optimised Theta model (DOTM) of Fiorucci,
 * Pellegrini, Louzada, Petropoulos and Koehler (2016), IJF 32(4). As OTM, but the line
 * is re-estimated at every step from the data seen so far, so the model is a proper
 * one-step-ahead forecaster (the authors' best-performing variant on M3, from memory):
 *   mu_t = l_{t-1} + (1 - 1/theta) [ (1 - alpha)^{t-1} A_{t-1} + (1 - (1 - alpha)^t) / alpha * B_{t-1} ]
 *   l_t  = alpha Y_t + (1 - alpha) l_{t-1}
 *   Ybar_t = ((t - 1) Ybar_{t-1} + Y_t) / t
 *   B_t = (t - 2)/(t + 1) B_{t-1} + 6 / (t + 1) (Y_t - Ybar_{t-1}) / t,   A_t = Ybar_t - (t + 1)/2 B_t
 * (A_t, B_t are exactly the least-squares line through Y_1..Y_t.) Equations: core.ts.
 */
import type { FitContext, ModelSpec } from '../types.js'
import { fitOptimisedTheta, MIN_LENGTH } from './fit.js'

export const dynamicOptimisedTheta: ModelSpec = {
  name: 'dynamic-optimised-theta',
  family: 'trend',
  complexity: 4,
  seasonal: false,
  requiresPositive: false,
  minLength: () => MIN_LENGTH,
  fit: (series: readonly number[], ctx: FitContext) => fitOptimisedTheta('dynamic-optimised-theta', true, series, ctx.seasonLength),
}
