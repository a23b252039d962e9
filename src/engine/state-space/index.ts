/** The exponential smoothing state-space family (HKOS 2008): see state-space-smoothing.ts. */
import type { ModelSpec } from '../types.js'
import { stateSpaceSmoothing } from './state-space-smoothing.js'

export { fitStateSpaceSmoothing, eligibleForms, type StateSpaceFit } from './state-space-smoothing.js'
export { admissibleForms, formName, type StateSpaceForm } from './forms.js'
export { estimateForm, evaluateForm, aiccOf } from './estimate.js'
export { runFilter, pointForecasts } from './filter.js'
export { forecastVariances, simulatedVariances, varianceMethod } from './variance.js'

export const stateSpaceModels: readonly ModelSpec[] = [stateSpaceSmoothing]
