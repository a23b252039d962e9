import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { ProblemError } from '../../errors.js'
import { ForecastResponse, type ForecastBody } from '../../schemas/results.js'
import { RunRequest } from '../../schemas/run.js'
import type { ResultItem } from '../../runs/contract.js'
import { SYNC_FORECAST } from './responses.js'
import { checkInlineOptions, checkRunOptions } from '../../runs/input.js'
import { requestFitCost } from '../../runs/fit-cost.js'

/** Default of SYNC_MAX_COST: fitting work one POST /v1/forecast may ask for. */
export const DEFAULT_SYNC_MAX_COST = 50_000_000

/** POST /v1/forecast: a handful of series forecast in the request. */
const forecastRoutes: FastifyPluginAsyncZod = async (app) => {
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
          'number of series (default 100; more gives 413 too-many-series) and fitting work (points x season length x ' +
          'holdout origins x candidate models, summed over the series; default at most 50,000,000, more gives 413 ' +
          'fit-cost-too-high): use POST /v1/runs for more. A series the engine rejects (too short, negative demand...) ' +
          'comes back as an item with `failure`, and so does one whose fit runs past the time limit (fit-time-limit).',
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
      const maxCost = app.config.syncMaxCost ?? DEFAULT_SYNC_MAX_COST
      const cost = requestFitCost(settings, series)
      if (cost > maxCost) {
        throw new ProblemError(
          'fit-cost-too-high',
          `This forecast asks for ${cost} units of fitting work (points x season length x holdout origins x candidate models, ` +
            `summed over the series); POST /v1/forecast takes at most ${maxCost} (SYNC_MAX_COST). Submit a run with POST /v1/runs`,
        )
      }
      // Fits run on the pool's threads, one series of a request at a time, so the event loop stays free
      // and one request never takes every thread.
      const items: ResultItem[] = []
      for (const s of series) {
        const { item, seconds } = await app.syncFits.fit(settings, s)
        app.metrics.fitDuration.observe({ source: 'sync' }, seconds)
        app.metrics.seriesFitted.inc({ source: 'sync', outcome: 'failure' in item ? 'error' : 'ok' })
        items.push(item)
      }
      request.log.info({ series: series.length, cost, failed: items.filter((i) => 'failure' in i).length }, 'sync forecast')
      return { items } as ForecastBody
    },
  )
}

export default forecastRoutes
