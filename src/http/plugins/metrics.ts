import fp from 'fastify-plugin'
import { Gauge } from 'prom-client'
import { RUN_STATUSES, type RunGateway } from '../../runs/contract.js'

type Stats = Awaited<ReturnType<RunGateway['stats']>>

/**
 * GET /metrics in Prometheus text format: request durations (recorded here),
 * and, asked of the gateway once per scrape: queue depth, runs by status and
 * the workers' fit counters (service-wide, kept in Redis), next to the sync
 * fit metrics this process fed. When the gateway cannot answer, those series
 * keep their last values and the scrape still succeeds.
 */
export default fp(
  async (app) => {
    const { registry, httpDuration } = app.metrics
    const gateway = app.gateway
    const log = app.log
    let stats: Stats | undefined
    const queueJobs = new Gauge({
      name: 'almanac_queue_jobs',
      help: 'Chunk jobs in the queue by state, as seen at scrape time',
      labelNames: ['state'],
      registers: [registry],
    })
    const runs = new Gauge({
      name: 'almanac_runs',
      help: 'Runs by status, service-wide: queued and running now; succeeded, failed and cancelled ever (counters kept in Redis)',
      labelNames: ['status'],
      registers: [registry],
    })
    /** One gateway call per scrape, shared by every series it feeds. */
    const refresh = async () => {
      try {
        stats = await gateway.stats()
      } catch (err) {
        log.warn({ err }, 'queue and run stats unavailable for /metrics')
        return
      }
      for (const state of ['waiting', 'active', 'delayed', 'failed'] as const) queueJobs.set({ state }, stats[state])
      if (stats.runs) for (const status of RUN_STATUSES) runs.set({ status }, stats.runs[status])
      if (stats.fits) app.metrics.setWorkerFits(stats.fits)
    }

    app.addHook('onResponse', async (request, reply) => {
      httpDuration.observe(
        {
          route: request.routeOptions.url ?? 'unmatched',
          method: request.method,
          status_code: String(reply.statusCode),
        },
        reply.elapsedTime / 1000,
      )
    })

    app.get(
      '/metrics',
      {
        schema: {
          tags: ['operations'],
          operationId: 'getMetrics',
          'x-problems': ['internal'],
          summary: 'Prometheus metrics of this process, queue depth and service-wide run counters',
          security: [],
          'x-responseMediaTypes': { 200: { 'text/plain': { schema: { type: 'string', description: 'Prometheus text exposition format 0.0.4' } } } },
        },
        config: { auth: false, rateLimit: false },
      },
      async (_request, reply) => {
        await refresh()
        reply.type(registry.contentType)
        return registry.metrics()
      },
    )
  },
  { name: 'metrics', dependencies: ['config'] },
)
