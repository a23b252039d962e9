import type { FastifyInstance } from 'fastify'
import { ProblemError } from '../errors.js'
import { scopeSkuErrors } from '../runs/scope.js'
import type { RunScope, RunSettings } from '../schemas/run.js'
import type { RunRecord } from '../runs/contract.js'
import { requireHistories } from './plugins/history.js'

/**
 * Submit a run over stored histories. A `scope.skus` list is checked first: a SKU
 * named twice or without a stored history is a 400 listing each one
 * (`scope.skus[i]`), and nothing is queued.
 */
export async function submitStoredScope(app: FastifyInstance, tenant: string, settings: RunSettings, scope: RunScope): Promise<RunRecord> {
  if (!app.gateway.submitScope) throw new ProblemError('not-ready', 'Runs over stored histories are not configured on this server')
  if ('skus' in scope) {
    const histories = requireHistories(app)
    const bad = await scopeSkuErrors(scope.skus, (skus) => histories.missing(tenant, skus))
    // Not kept for Idempotency-Key replay: storing the missing histories makes the same request valid.
    if (bad) throw new ProblemError('validation-failed', bad.summary, bad.errors, {}, { dependsOnState: true })
  }
  return (await app.gateway.submitScope(tenant, settings, scope)).record
}
