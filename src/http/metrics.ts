import { Counter, Histogram, Registry } from 'prom-client'

/**
 * Prometheus metrics of one process. The HTTP layer feeds the request
 * histogram and, for POST /v1/forecast, the fit metrics; in-process workers
 * may feed the fit metrics too when given this object.
 */
export interface ServiceMetrics {
  readonly registry: Registry
  readonly httpDuration: Histogram<'route' | 'method' | 'status_code'>
  readonly seriesFitted: Counter<'source' | 'outcome'>
  readonly fitDuration: Histogram<'source'>
}

export function createServiceMetrics(registry: Registry = new Registry()): ServiceMetrics {
  return {
    registry,
    httpDuration: new Histogram({
      name: 'almanac_http_request_duration_seconds',
      help: 'HTTP request duration by route, method and status code',
      labelNames: ['route', 'method', 'status_code'],
      buckets: [0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5, 5, 10, 30],
      registers: [registry],
    }),
    seriesFitted: new Counter({
      name: 'almanac_series_fitted_total',
      help: 'Series forecast by this process, by source (sync or worker) and outcome (ok or error)',
      labelNames: ['source', 'outcome'],
      registers: [registry],
    }),
    fitDuration: new Histogram({
      name: 'almanac_fit_duration_seconds',
      help: 'Time to select and fit the model of one series, by source',
      labelNames: ['source'],
      buckets: [0.001, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5],
      registers: [registry],
    }),
  }
}
