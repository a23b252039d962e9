import type { FastifyInstance } from 'fastify'
import { ProblemError, type FieldError } from '../errors.js'
import type { RunSettings } from '../schemas/run.js'
import type { HistorySelection } from '../storage/history-store.js'
import type { RunRecord } from '../storage/types.js'
import { MAX_FIELD_ERRORS } from './problem-mapping.js'
import { requireHistories } from './plugins/history.js'

/**
 * Submit a run over stored histories. A `skus` list is checked first: a SKU
 * named twice or without a stored history is a 400 listing each one
 * (`skus[i]`), and nothing is queued.
 */
export async function submitStoredSelection(
  app: FastifyInstance,
  tenant: string,
  settings: RunSettings,
  selection: HistorySelection,
): Promise<RunRecord> {
  if (!app.gateway.submitSelection) throw new ProblemError('not-ready', 'Runs over stored histories are not configured on this server')
  if ('skus' in selection) {
    const errors: FieldError[] = []
    const seen = new Map<string, number>()
    selection.skus.forEach((sku, i) => {
      if (seen.has(sku)) errors.push({ path: `skus[${i}]`, message: `SKU ${JSON.stringify(sku)} is also skus[${seen.get(sku)}]` })
      else seen.set(sku, i)
    })
    const missing = new Set(await requireHistories(app).missing(tenant, [...seen.keys()]))
    for (const [sku, i] of seen) if (missing.has(sku)) errors.push({ path: `skus[${i}]`, message: `no stored history for SKU ${JSON.stringify(sku)}` })
    if (errors.length > 0) {
      errors.sort((a, b) => index(a.path) - index(b.path))
      const more = errors.length > MAX_FIELD_ERRORS ? `; the first ${MAX_FIELD_ERRORS} are listed` : ''
      throw new ProblemError(
        'validation-failed',
        `${missing.size} SKU(s) without a stored history, ${errors.length - missing.size} named twice${more}`,
        errors.slice(0, MAX_FIELD_ERRORS),
      )
    }
  }
  return app.gateway.submitSelection(tenant, settings, selection)
}

const index = (path: string) => Number(/\[(\d+)\]/.exec(path)?.[1] ?? 0)
