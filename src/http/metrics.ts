import { Counter, Histogram, Registry } from 'prom-client'
import type { FitStats } from '../runs/contract.js'
import { FIT_BUCKETS_SECONDS } from '../storage/runs/stats-store.js'

/**
 * Prometheus metrics of one process. The HTTP layer feeds the request
 * histogram and, for POST /v1/forecast, the fit metrics with source="sync"
 * (this process only). Chunk workers run in other processes and threads: they
 * add their fits to Redis (storage/runs/stats-store.ts), and GET /metrics hands the
 * totals it read to `setWorkerFits`, so the same two families also carry
 * source="worker" series: service-wide totals, identical in every API
 * replica's scrape (aggregate them with max, not sum, across replicas).
 */
export interface ServiceMetrics {
  readonly registry: Registry
  readonly httpDuration: Histogram<'route' | 'method' | 'status_code'>
  readonly seriesFitted: Counter<'source' | 'outcome'>
  readonly fitDuration: Histogram<'source'>
  /** The workers' totals read from Redis at scrape time (undefined: leave the worker series out). */
  setWorkerFits(fits: FitStats | undefined): void
}

type Value = { value: number; labels: Record<string, string | number>; metricName?: string }

/**
 * Registers `inner` (created with `registers: []`) under its name through a
 * wrapper whose get() returns the inner values plus `extra()`. prom-client's
 * registry only needs name, type, get() and reset() of a metric; the cast is
 * for its TypeScript signature, which lists the built-in classes only. The
 * inner histogram's text form goes through get() too (same numbers; labels
 * printed in label-name order).
 */
function registerWithExtra(registry: Registry, inner: Counter<string> | Histogram<string>, extra: (name: string) => Value[]): void {
  const wrapper = {
    get name() {
      return (inner as unknown as { name: string }).name
    },
    get type() {
      return (inner as unknown as { type: string }).type
    },
    async get() {
      const m = await inner.get()
      return { ...m, values: [...(m.values as Value[]), ...extra(m.name)] }
    },
    reset: () => inner.reset(),
  }
  registry.registerMetric(wrapper as unknown as Counter<string>)
}

/** The workers' totals as source="worker" series of the two fit families. */
function workerFitValues(w: FitStats | undefined, kind: 'counter' | 'histogram', name: string): Value[] {
  if (w === undefined) return []
  const source = 'worker'
  if (kind === 'counter') {
    return [
      { labels: { source, outcome: 'ok' }, value: w.ok },
      { labels: { source, outcome: 'error' }, value: w.error },
    ]
  }
  const bounds: (number | string)[] = [...FIT_BUCKETS_SECONDS, '+Inf']
  return [
    ...bounds.map((le, i) => ({ labels: { le, source }, value: w.buckets[i] ?? w.count, metricName: `${name}_bucket` })),
    { labels: { source }, value: w.sum, metricName: `${name}_sum` },
    { labels: { source }, value: w.count, metricName: `${name}_count` },
  ]
}

export function createServiceMetrics(registry: Registry = new Registry()): ServiceMetrics {
  let workerFits: FitStats | undefined
  const seriesFitted = new Counter({
    name: 'almanac_series_fitted_total',
    help: 'Series forecast, by source (sync: this process; worker: all chunk workers, from Redis) and outcome (ok or error)',
    labelNames: ['source', 'outcome'],
    registers: [],
  })
  const fitDuration = new Histogram({
    name: 'almanac_fit_duration_seconds',
    help: 'Time to select and fit the model of one series, by source (sync: this process; worker: all chunk workers)',
    labelNames: ['source'],
    buckets: [...FIT_BUCKETS_SECONDS],
    registers: [],
  })
  registerWithExtra(registry, seriesFitted, (name) => workerFitValues(workerFits, 'counter', name))
  registerWithExtra(registry, fitDuration, (name) => workerFitValues(workerFits, 'histogram', name))
  return {
    registry,
    httpDuration: new Histogram({
      name: 'almanac_http_request_duration_seconds',
      help: 'HTTP request duration by route, method and status code',
      labelNames: ['route', 'method', 'status_code'],
      buckets: [0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5, 5, 10, 30],
      registers: [registry],
    }),
    seriesFitted,
    fitDuration,
    setWorkerFits(fits) {
      workerFits = fits
    },
  }
}
