import fp from 'fastify-plugin'
import { createSyncFitPool, type SyncFitter } from '../sync-fits/pool.js'
import '../types.js'

/** Default longest fit of one series in POST /v1/forecast (SYNC_SERIES_TIMEOUT_MS). */
export const DEFAULT_SYNC_SERIES_TIMEOUT_MS = 10_000

/**
 * The thread pool that fits POST /v1/forecast's series off the event loop.
 * Opened here and closed here; a test may hand in its own fitter (then it owns it).
 */
export default fp<{ fitter?: SyncFitter | undefined }>(
  async (app, opts) => {
    if (opts.fitter) {
      app.decorate('syncFits', opts.fitter)
      return
    }
    const pool = createSyncFitPool({
      threads: app.config.syncFitThreads ?? 0,
      seriesTimeoutMs: app.config.syncSeriesTimeoutMs ?? DEFAULT_SYNC_SERIES_TIMEOUT_MS,
    })
    app.decorate('syncFits', pool)
    app.addHook('onClose', async () => {
      await pool.close()
    })
  },
  { name: 'sync-fits', dependencies: ['config'] },
)
