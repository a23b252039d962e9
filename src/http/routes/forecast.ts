import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import type { ForecastResult, SeriesInput } from '../../engine/index.js'
import { ProblemError } from '../../errors.js'
import { ForecastResponse, type ForecastBody } from '../../schemas/results.js'
import { RunRequest, type RunSettings, type SeriesItem } from '../../schemas/run.js'
import type { ResultItem } from '../../runs/contract.js'
import type { ServiceMetrics } from '../metrics.js'
import { SYNC_FORECAST } from './responses.js'
import { checkInlineOptions, checkRunOptions } from '../../runs/input.js'
import { forecastItem } from '../../runs/forecast-sku.js'

export type ForecastFn = (input: SeriesInput) => ForecastResult

/**
 * Forecast one series with the same mapping the workers use (input the engine
 * rejects becomes an item with `failure`), timed into the fit metrics.
 */
export function timedForecastItem(fn: ForecastFn, settings: RunSettings, series: SeriesItem, metrics: ServiceMetrics): ResultItem {
  const end = metrics.fitDuration.startTimer({ source: 'sync' })
  try {
    const item = forecastItem(fn, settings, series)
    metrics.seriesFitted.inc({ source: 'sync', outcome: 'failure' in item ? 'error' : 'ok' })
    return item
  } finally {
    end()
  }
}

/** POST /v1/forecast: a handful of series forecast in the request. */
export function forecastRoutes(fn: ForecastFn): FastifyPluginAsyncZod {
  return async (app) => {
    app.post(
      '/v1/forecast',
      {
        schema: {
          tags: ['forecasts'],
        operationId: 'forecastSeries',
        'x-problems': SYNC_FORECAST,
          summary: 'Forecast a few series now',
          description:
            'Selects and fits a model per series and answers with the forecasts. At most the configured ' +
            'number of series (default 100; more gives 413 too-many-series): use POST /v1/runs for more. ' +
            'A series the engine rejects (too short, negative demand...) comes back as an item with `failure`.',
          body: RunRequest,
          response: { 200: ForecastResponse },
        },
      },
      async (request) => {
        const { series, ...settings } = request.body
        const max = app.config.syncMaxSeries
        if (series.length > max) {
          throw new ProblemError(
            'too-many-series',
            `POST /v1/forecast takes at most ${max} series (got ${series.length}); submit a run with POST /v1/runs`,
          )
        }
        if (settings.callbackUrl !== undefined) {
          const message = 'only runs call back; POST /v1/forecast answers in the response'
          throw new ProblemError('validation-failed', message, [{ path: 'callbackUrl', message }])
        }
        if (settings.publish === true) {
          const message = 'a synchronous forecast is never published; submit a run with POST /v1/runs and publish: true'
          throw new ProblemError('validation-failed', message, [{ path: 'publish', message }])
        }
        checkRunOptions(settings) // same option checks as a run: RunInputError -> 400
        checkInlineOptions(settings)
        // Fitting is CPU work on the event loop: yield every ~20 ms so health checks and other requests keep flowing.
        const items: ResultItem[] = []
        let slice = performance.now()
        for (const s of series) {
          items.push(timedForecastItem(fn, settings, s, app.metrics))
          if (performance.now() - slice > 20) {
            await new Promise((resolve) => setImmediate(resolve))
            slice = performance.now()
          }
        }
        request.log.info({ series: series.length, failed: items.filter((i) => 'failure' in i).length }, 'sync forecast')
        return { items } as ForecastBody
      },
    )
  }
}
