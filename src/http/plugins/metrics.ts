import fp from 'fastify-plugin'
import { Gauge } from 'prom-client'

/**
 * GET /metrics in Prometheus text format: request durations (recorded here),
 * queue depth (asked of the gateway at scrape time) and the fit metrics this
 * process fed (sync forecasts; in-process workers when they share the object).
 */
export default fp(
  async (app) => {
    const { registry, httpDuration } = app.metrics
    const gateway = app.gateway
    const log = app.log
    new Gauge({
      name: 'almanac_queue_jobs',
      help: 'Chunk jobs in the queue by state, as seen at scrape time',
      labelNames: ['state'],
      registers: [registry],
      async collect() {
        try {
          const stats = await gateway.stats()
          for (const state of ['waiting', 'active', 'delayed', 'failed'] as const) this.set({ state }, stats[state])
        } catch (err) {
          log.warn({ err }, 'queue stats unavailable for /metrics')
        }
      },
    })

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
      { schema: { hide: true }, config: { auth: false, rateLimit: false } },
      async (_request, reply) => {
        reply.type(registry.contentType)
        return registry.metrics()
      },
    )
  },
  { name: 'metrics', dependencies: ['config'] },
)
