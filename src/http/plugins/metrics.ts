import { createHash, timingSafeEqual } from 'node:crypto'
import fp from 'fastify-plugin'
import { Gauge } from 'prom-client'
import { ProblemError } from '../../errors.js'
import { RUN_STATUSES, type RunGateway } from '../../runs/contract.js'

type Stats = Awaited<ReturnType<RunGateway['stats']>>

/** Default of METRICS_CACHE_MS. */
export const DEFAULT_METRICS_CACHE_MS = 5000

const sha256 = (text: string) => createHash('sha256').update(text, 'utf8').digest()

/**
 * GET /metrics in Prometheus text format: request durations (recorded here),
 * and, asked of the gateway once per scrape: queue depth, runs by status and
 * the workers' fit counters (service-wide, kept in Redis), next to the sync
 * fit metrics this process fed. When the gateway cannot answer, those series
 * keep their last values and the scrape still succeeds. The Redis figures are
 * read at most once per METRICS_CACHE_MS, however often (or how many at once)
 * scrapers ask, so scrapes cannot load Redis; with METRICS_TOKEN set, a scrape
 * needs that token as a bearer token.
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
    const cacheMs = app.config.metricsCacheMs ?? DEFAULT_METRICS_CACHE_MS
    const token = app.config.metricsToken === undefined ? null : sha256(app.config.metricsToken)
    let readAt = Number.NEGATIVE_INFINITY
    let reading: Promise<void> | null = null
    /** The Redis figures, read again once they are older than the cache time; concurrent scrapes share one read. */
    const fresh = (): Promise<void> => {
      if (reading !== null) return reading
      if (performance.now() - readAt < cacheMs) return Promise.resolve()
      reading = refresh().finally(() => {
        readAt = performance.now()
        reading = null
      })
      return reading
    }
    /** One gateway call, shared by every series it feeds. */
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
          'x-problems': ['unauthorized', 'internal'],
          summary: 'Prometheus metrics of this process, queue depth and service-wide run counters',
          description:
            'Queue and run figures are read from Redis at most once per METRICS_CACHE_MS (default 5 s). ' +
            'When the server has METRICS_TOKEN set, send it as Authorization: Bearer <token>; otherwise the route is open ' +
            '(keep it on a private network).',
          security: [],
          'x-responseMediaTypes': { 200: { 'text/plain': { schema: { type: 'string', description: 'Prometheus text exposition format 0.0.4' } } } },
        },
        config: { auth: false, rateLimit: false },
      },
      async (request, reply) => {
        if (token !== null) {
          const match = /^Bearer +(\S+) *$/i.exec(request.headers.authorization ?? '')
          if (!match || !timingSafeEqual(sha256(match[1] ?? ''), token)) {
            throw new ProblemError('unauthorized', 'GET /metrics needs the metrics token as Authorization: Bearer <token>', undefined, {
              'www-authenticate': 'Bearer realm="almanac-metrics"',
            })
          }
        }
        await fresh()
        reply.type(registry.contentType)
        return registry.metrics()
      },
    )
  },
  { name: 'metrics', dependencies: ['config'] },
)
