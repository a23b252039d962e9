import { z } from 'zod'
import { FREQUENCIES } from '../engine/index.js'

/** What closing periods did (PUT /v1/closed-periods/{frequency}, or an upload's closeThrough). */
export const ClosingReportSchema = z
  .object({
    frequency: z.enum(FREQUENCIES),
    closedThrough: z.string(),
    previous: z.string().nullable().describe('The closed-through period before this call'),
    outcome: z.enum(['moved', 'unchanged']).describe('unchanged: it was already closed through this period (the walk ran again)'),
    checkedSkus: z.number().int().min(0).describe('Stored histories of the frequency looked at (and rescored)'),
    advancedSkus: z.number().int().min(0).describe('Histories carried forward to closedThrough with zero demand'),
  })
  .meta({ id: 'ClosingReport' })
