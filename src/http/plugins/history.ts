import fp from 'fastify-plugin'
import type { FastifyInstance } from 'fastify'
import { ProblemError } from '../../errors.js'
import type { HistoryStore } from '../../storage/histories/history-store.js'

declare module 'fastify' {
  interface FastifyInstance {
    /** Stored demand histories; null when the app was built without them. */
    histories: HistoryStore | null
  }
}

/** Makes the history store available to the routes. */
export default fp<{ histories?: HistoryStore }>(
  async (app, opts) => {
    app.decorate('histories', opts.histories ?? null)
  },
  { name: 'histories' },
)

/** The history store, or a 503 problem when this app has none. */
export function requireHistories(app: FastifyInstance): HistoryStore {
  if (app.histories === null) throw new ProblemError('not-ready', 'Stored histories are not configured on this server')
  return app.histories
}
