import fp from 'fastify-plugin'
import { createBodyThreads, type BodyThreads } from '../body-threads/pool.js'
import '../types.js'

/**
 * The thread that parses large JSON bodies off the event loop (routes with
 * `largeJsonOnThread`). Opened here and closed here; a test may hand in its own
 * (then it owns it).
 */
export default fp<{ threads?: BodyThreads | undefined }>(
  async (app, opts) => {
    if (opts.threads) {
      app.decorate('bodyThreads', opts.threads)
      return
    }
    const threads = createBodyThreads()
    app.decorate('bodyThreads', threads)
    app.addHook('onClose', async () => {
      await threads.close()
    })
  },
  { name: 'body-threads' },
)
