import type { RunGateway } from '../storage/types.js'
import type { SubmitScheduled } from './fire.js'

/**
 * Submits a scheduled run over stored histories through the gateway (the
 * same path as POST /v1/runs with skus, tags or all).
 * @throws RunInputError('empty-selection') when the selection matches no history.
 */
export function submitViaGateway(gateway: Pick<RunGateway, 'submitSelection'>): SubmitScheduled {
  return (tenant, settings, selection) => {
    if (!gateway.submitSelection) throw new Error('this gateway cannot run over stored histories')
    return gateway.submitSelection(tenant, settings, selection)
  }
}
