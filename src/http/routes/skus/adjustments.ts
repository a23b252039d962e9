import { z } from 'zod'
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { ProblemError } from '../../../errors.js'
import { PageQuery, SkuParams } from '../../../schemas/params.js'
import {
  AdjustmentList,
  AdjustmentPeriodParams,
  AdjustmentResource,
  DeleteAdjustmentQuery,
  PostAdjustmentsBody,
  PutAdjustmentBody,
  SkuValueAdded,
  TrailPage,
} from '../../../schemas/adjustments.js'
import type { AdjustmentChange } from '../../../runs/adjustments.js'
import { requireAdjustments } from '../../plugins/adjustments.js'
import { READ, READ_ONE, WRITE_ONE } from '../responses.js'

const ADJUST = [...WRITE_ONE, 'period-not-adjustable', 'adjustment-conflict'] as const

const changeOf = (b: { setDemand?: number | undefined; changePercent?: number | undefined }): AdjustmentChange =>
  b.setDemand !== undefined ? { setDemand: b.setDemand } : { changePercent: b.changePercent ?? 0 }

const CAUTION =
  ' Adjusted figures feed ordering decisions: they are planning estimates to review, not commitments.'

/**
 * /v1/skus/{sku}/adjustments: a planner's (or an ERP's) adjustments of a SKU's
 * current forecast, their audit trail, and /v1/skus/{sku}/value-added.
 */
const routes: FastifyPluginAsyncZod = async (app) => {
  app.get(
    '/:sku/adjustments',
    {
      schema: {
        tags: ['forecasts'],
        operationId: 'listSkuAdjustments',
        'x-problems': READ,
        summary: 'Adjustments in force for a SKU',
        description:
          "Each adjustment in force, oldest period first, with the current forecast's statistical demand of its period " +
          'and the final demand. An adjustment expires once the SKU\'s stored history contains its period.',
        params: SkuParams,
        response: { 200: AdjustmentList },
      },
    },
    async (request) => requireAdjustments(app).list(request.tenant, request.params.sku),
  )

  app.post(
    '/:sku/adjustments',
    {
      schema: {
        tags: ['forecasts'],
        operationId: 'adjustSkuForecast',
        'x-problems': ADJUST,
        summary: "Adjust periods of a SKU's current forecast",
        description:
          'Sets the same adjustment (setDemand or changePercent, with reason and author) for each listed period of ' +
          "the SKU's current forecast. All or nothing: a period the forecast does not have, or one the SKU's history " +
          'already contains, is a 422 naming it. A period whose adjustment already says the same is left alone (no new ' +
          'trail entry), so a repeated request changes nothing.' +
          CAUTION,
        params: SkuParams,
        body: PostAdjustmentsBody,
        response: { 200: AdjustmentList.pick({ items: true }) },
      },
    },
    async (request) => {
      const { periods, reason, author } = request.body
      const out = await requireAdjustments(app).set(request.tenant, request.params.sku, { periods, change: changeOf(request.body), reason, author })
      return { items: out.items }
    },
  )

  app.put(
    '/:sku/adjustments/:period',
    {
      schema: {
        tags: ['forecasts'],
        operationId: 'putSkuAdjustment',
        'x-problems': ADJUST,
        summary: "Set the adjustment of one period of a SKU's forecast",
        description:
          '201 when the period had no adjustment, 200 when it replaced one or was already the same (idempotent: ' +
          'the same body again changes nothing and adds no trail entry).' +
          CAUTION,
        params: SkuParams.extend(AdjustmentPeriodParams.shape),
        body: PutAdjustmentBody,
        response: { 200: AdjustmentResource, 201: AdjustmentResource },
      },
    },
    async (request, reply) => {
      const { sku, period } = request.params
      const { reason, author } = request.body
      const out = await requireAdjustments(app).set(request.tenant, sku, { periods: [period], change: changeOf(request.body), reason, author }, () => 'period')
      const item = out.items[0]
      if (item === undefined) throw new ProblemError('adjustment-conflict', `The adjustment of ${period} was removed meanwhile; try again`)
      reply.code(out.created ? 201 : 200)
      return item
    },
  )

  app.delete(
    '/:sku/adjustments/:period',
    {
      schema: {
        tags: ['forecasts'],
        operationId: 'deleteSkuAdjustment',
        'x-problems': [...WRITE_ONE, 'adjustment-conflict'],
        summary: 'Remove the adjustment of one period',
        description:
          'The period goes back to its statistical demand. 204 whether or not it had an adjustment (idempotent); ' +
          'a removal is recorded in the trail with the author (and reason) given in the query.',
        params: SkuParams.extend(AdjustmentPeriodParams.shape),
        querystring: DeleteAdjustmentQuery,
        response: { 204: z.null().describe('Removed, or there was none') },
      },
    },
    async (request, reply) => {
      const { sku, period } = request.params
      await requireAdjustments(app).remove(request.tenant, sku, period, request.query)
      reply.code(204)
      return null
    },
  )

  app.get(
    '/:sku/adjustments/trail',
    {
      schema: {
        tags: ['forecasts'],
        operationId: 'getSkuAdjustmentTrail',
        'x-problems': READ,
        summary: "Audit trail of a SKU's adjustments",
        description:
          'Every change, newest first: who, when, the period, the adjustment before and after, the statistical demand ' +
          'then, the final demand before and after, and why. Entries are kept without expiry.',
        params: SkuParams,
        querystring: PageQuery,
        response: { 200: TrailPage },
      },
    },
    async (request) => requireAdjustments(app).trail(request.tenant, request.params.sku, request.query.limit, request.query.cursor),
  )

  app.get(
    '/:sku/value-added',
    {
      schema: {
        tags: ['accuracy'],
        operationId: 'getSkuValueAdded',
        'x-problems': READ_ONE,
        summary: 'Forecast value added of a SKU',
        description:
          'Once actual demand arrives for periods of the SKU\'s forecast, each is scored for the statistical forecast, ' +
          'the final (adjusted) forecast and the naive forecast (the last value known when the forecast was made). ' +
          'Did the adjustments beat the statistical forecast, and did both beat naive? 404 until a period is scored.',
        params: SkuParams,
        response: { 200: SkuValueAdded },
      },
    },
    async (request) => {
      const out = await requireAdjustments(app).valueAdded(request.tenant, request.params.sku)
      if (out === null) throw new ProblemError('not-found', `No scored forecast for SKU ${request.params.sku}`)
      return out
    },
  )
}

export default routes
