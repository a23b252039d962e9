import type { RunGateway } from '../runs/contract.js'
import type { SubmitScheduled } from './fire.js'

/**
 * Submits a scheduled run over stored histories through the gateway (the
 * same path as POST /v1/runs with a scope), its origin naming the schedule.
 * @throws RunInputError('empty-scope') when the scope matches no history.
 */
export function submitViaGateway(gateway: Pick<RunGateway, 'submitScope'>): SubmitScheduled {
  return (tenant, settings, scope, scheduleId) => {
    if (!gateway.submitScope) throw new Error('this gateway cannot run over stored histories')
    return gateway.submitScope(tenant, settings, scope, { kind: 'schedule', scheduleId })
  }
}
