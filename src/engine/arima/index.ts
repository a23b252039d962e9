/** Seasonal ARIMA with automatic order selection (Hyndman and Khandakar 2008): see auto-arima.ts. */
import type { ModelSpec } from '../types.js'
import { autoArima } from './auto-arima.js'

export { autoArima, fitAutoArima, arimaForecast, type ArimaFit } from './auto-arima.js'
export { estimateArma, runAt, type ArimaOrder, type ArmaCoefficients, type ArmaEstimate } from './estimate.js'
export { runArma, logLikelihoodAt, armaForecast } from './kalman.js'
export { expandAr, expandMa, rootsOutsideUnitCircle, differencingPolynomial, difference, psiWeights } from './polynomials.js'
export { kpssStatistic, seasonalStrength, differences, seasonalDifferences } from './unit-root.js'

export const arimaModels: readonly ModelSpec[] = [autoArima]
