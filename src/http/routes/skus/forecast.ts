import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { ProblemError } from '../../../errors.js'
import { SkuParams, ViewQuery } from '../../../schemas/params.js'
import { compactItem } from '../../../runs/views.js'
import { adjustPoints } from '../../../runs/adjustments.js'
import { SkuForecast, type SkuForecastBody } from '../../../schemas/results.js'
import { READ_ONE } from '../responses.js'

/** GET /v1/skus/{sku}/forecast: the latest published forecast of a SKU. */
const routes: FastifyPluginAsyncZod = async (app) => {
  app.get(
    '/:sku/forecast',
    {
      schema: {
        tags: ['forecasts'],
        operationId: 'getSkuForecast',
        'x-etag': true,
        'x-problems': READ_ONE,
        summary: 'Latest published forecast of a SKU',
        description:
          'The forecast of the newest publishing run (what-if runs never replace it). ' +
          'Each point carries the statistical demand (demand), the adjustment in force (adjustment) and the final ' +
          'demand to plan with (finalDemand); see /v1/skus/{sku}/adjustments. Figures are estimates to review before ordering. ' +
          'URL-encode the SKU (e.g. / as %2F). 404 when no run has published it yet, or when the results of the run ' +
          'that forecast it last have expired (result retention); accuracy tracking keeps its point forecast regardless.',
        params: SkuParams,
        querystring: ViewQuery,
        response: { 200: SkuForecast },
      },
      config: { etag: true },
      // As results.ts: the item comes from the run store, written by the code that
      // defines the schema and checked when read back (loadItem), so it is serialized
      // directly. The zod serializer doubled the time of an answer on a route polled
      // at high rates (bench/RESULTS.md); the schema still documents it.
      serializerCompiler: () => (data) => JSON.stringify(data),
    },
    async (request) => {
      const { sku } = request.params
      const latest = await app.gateway.latestForecast(request.tenant, sku)
      if (!latest || 'failure' in latest.item) throw new ProblemError('not-found', `No forecast for SKU ${sku}`)
      const item = request.query.view === 'compact' ? compactItem(latest.item) : latest.item
      const points = latest.item.forecast
      const forecast = app.adjustments ? await app.adjustments.adjustForecast(request.tenant, sku, points) : adjustPoints(points, new Map())
      return { ...item, forecast, sku, runId: latest.runId, producedAt: latest.producedAt } as SkuForecastBody
    },
  )
}

export default routes
