import fp from 'fastify-plugin'
import type { FastifyInstance } from 'fastify'
import { ProblemError } from '../../errors.js'
import type { ErpServices } from '../erp-services.js'

declare module 'fastify' {
  interface FastifyInstance {
    /** Callbacks, deliveries, schedules and accuracy; null when the app was built without them. */
    erp: ErpServices | null
  }
}

/** Makes the ERP integration services available to the routes. */
export default fp<{ erp?: ErpServices }>(
  async (app, opts) => {
    app.decorate('erp', opts.erp ?? null)
  },
  { name: 'erp' },
)

/** The services, or a 503 problem when this app has none. */
export function requireErp(app: FastifyInstance): ErpServices {
  if (app.erp === null) throw new ProblemError('not-ready', 'Schedules, callbacks and accuracy are not configured on this server')
  return app.erp
}
