import fp from 'fastify-plugin'
import type { FastifyInstance } from 'fastify'
import { ProblemError } from '../../errors.js'
import type { AdjustmentService } from '../../runs/adjustment-service.js'

declare module 'fastify' {
  interface FastifyInstance {
    /** Adjustments of SKU forecasts and their value added; null when the app was built without them. */
    adjustments: AdjustmentService | null
  }
}

/** Makes the adjustment service available to the routes. */
export default fp<{ adjustments?: AdjustmentService }>(
  async (app, opts) => {
    app.decorate('adjustments', opts.adjustments ?? null)
  },
  { name: 'adjustments' },
)

/** The service, or a 503 problem when this app has none. */
export function requireAdjustments(app: FastifyInstance): AdjustmentService {
  if (app.adjustments === null) throw new ProblemError('not-ready', 'Adjustments are not configured on this server')
  return app.adjustments
}
