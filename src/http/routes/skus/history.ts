import type { FastifyInstance } from 'fastify'
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { z } from 'zod'
import { formatPeriod, parsePeriod } from '../../../engine/index.js'
import { ProblemError } from '../../../errors.js'
import { firstPeriodLabel } from '../../../history/buckets.js'
import { lastPeriodOf } from '../../../history/period-range.js'
import { skuQuotaReason } from '../../../history/quota.js'
import { DEFAULT_QUOTA_SKUS_PER_TENANT } from '../../../config.js'
import { normaliseTags } from '../../../history/tags.js'
import { forgetSkuRecords, type SkuRecordStores } from '../../../history/sku-records.js'
import { HistoryBody, HistoryResource } from '../../../schemas/history.js'
import { SkuParams } from '../../../schemas/params.js'
import { StoredBytesQuotaError, type StoredHistory } from '../../../storage/histories/history-store.js'
import { requireHistories } from '../../plugins/history.js'
import { READ_ONE, WRITE, WRITE_ONE } from '../responses.js'

/** The stores of the app that keep records per SKU (history/sku-records.ts). */
function skuRecordStores(app: FastifyInstance): SkuRecordStores {
  const { gateway, erp, adjustments } = app
  return {
    ...(gateway.forgetLatestForecast === undefined ? {} : { forgetLatestForecast: (t, s) => gateway.forgetLatestForecast!(t, s) }),
    ...(erp == null ? {} : { forgetAccuracy: (t, s) => erp.accuracy.forget(t, s) }),
    ...(adjustments == null ? {} : { forgetAdjustments: (t, s) => adjustments.forget(t, s) }),
  }
}

/** A stored history as clients see it. */
export function toHistoryResource(h: StoredHistory) {
  return {
    sku: h.sku,
    frequency: h.frequency,
    firstPeriod: h.firstPeriod,
    lastPeriod: formatPeriod(parsePeriod(h.firstPeriod, h.frequency) + h.demand.length - 1, h.frequency),
    periodCount: h.demand.length,
    demand: [...h.demand],
    tags: [...h.tags],
    ...(h.replenishment === undefined ? {} : { replenishment: h.replenishment }),
    updatedAt: h.updatedAt,
  }
}

/** PUT and GET /v1/skus/{sku}/history: one SKU's stored demand history. */
const routes: FastifyPluginAsyncZod = async (app) => {
  app.put(
    '/:sku/history',
    {
      schema: {
        tags: ['histories'],
        operationId: 'putSkuHistory',
        'x-problems': [...WRITE, 'limit-reached'],
        summary: "Replace a SKU's stored demand history",
        description:
          'Stores the whole history (demand and tags) of one SKU, replacing what was stored. 201 when the SKU ' +
          'had no history, 200 otherwise. Runs can then forecast it with { "skus": [...] }, { "tags": [...] } or { "all": true }.',
        params: SkuParams,
        body: HistoryBody,
        response: { 200: HistoryResource, 201: HistoryResource },
      },
    },
    async (request, reply) => {
      const store = requireHistories(app)
      const { sku } = request.params
      const { frequency, demand, tags, replenishment } = request.body
      const firstPeriod = firstPeriodLabel(request.body.firstPeriod, frequency)
      let firstOrdinal: number
      try {
        firstOrdinal = parsePeriod(firstPeriod, frequency)
      } catch (err) {
        throw new ProblemError('validation-failed', 'The request body has 1 invalid field', [{ path: 'firstPeriod', message: (err as Error).message }])
      }
      // Checked before writing: a history without a last label would be stored and then unreadable.
      const last = lastPeriodOf(firstOrdinal, demand.length, frequency)
      if ('reason' in last) throw new ProblemError('validation-failed', 'The request body has 1 invalid field', [{ path: 'demand', message: last.reason }])
      const quota = app.config.quotaSkusPerTenant ?? DEFAULT_QUOTA_SKUS_PER_TENANT
      if ((await store.missing(request.tenant, [sku])).length === 1) {
        const held = await store.count(request.tenant)
        if (held >= quota) {
          const why = skuQuotaReason(held, quota)
          throw new ProblemError('limit-reached', `SKU ${sku} is new and ${why}`, [{ path: 'sku', message: why }], {}, { dependsOnState: true })
        }
      }
      const normalised = normaliseTags(tags ?? [])
      if ('reason' in normalised) {
        throw new ProblemError('validation-failed', 'The request body has 1 invalid field', [{ path: 'tags', message: normalised.reason }])
      }
      const { outcome, history } = await store
        .put(request.tenant, sku, {
          frequency,
          firstPeriod,
          demand,
          tags: normalised.tags,
          ...(replenishment === undefined ? {} : { replenishment }),
        })
        .catch((err: unknown) => {
          if (!(err instanceof StoredBytesQuotaError)) throw err
          throw new ProblemError('limit-reached', `The history of SKU ${sku} was not stored: ${err.message}`, [{ path: 'demand', message: err.message }], {}, { dependsOnState: true })
        })
      request.log.info({ sku, periodCount: demand.length, outcome }, 'history stored')
      if (outcome === 'created') reply.code(201).header('location', `/v1/skus/${encodeURIComponent(sku)}/history`)
      return toHistoryResource(history)
    },
  )

  app.delete(
    '/:sku/history',
    {
      schema: {
        tags: ['histories'],
        operationId: 'deleteSkuHistory',
        'x-problems': WRITE_ONE,
        summary: "Delete a SKU's stored history and its records",
        description:
          "Deletes the SKU's history and stock policy, its tags, its latest and kept published forecasts, its accuracy records, " +
          'its adjustments in force and their value-added records (the adjustment audit trail stays). ' +
          'Results of earlier runs stay under their run until they expire. 204 when deleted, 404 when the SKU had no history.',
        params: SkuParams,
        response: { 204: z.null().describe('Deleted') },
      },
    },
    async (request, reply) => {
      const { sku } = request.params
      const store = requireHistories(app)
      const notFound = () => new ProblemError('not-found', `No stored history for SKU ${sku}`)
      if ((await store.missing(request.tenant, [sku])).length > 0) throw notFound()
      // Records first, the history last: if a step fails, a retry still finds the SKU and finishes the job.
      await forgetSkuRecords(skuRecordStores(app), request.tenant, sku)
      if (!(await store.delete(request.tenant, sku))) throw notFound()
      request.log.info({ sku }, 'history deleted')
      reply.code(204)
      return null
    },
  )

  app.get(
    '/:sku/history',
    {
      schema: {
        tags: ['histories'],
        operationId: 'getSkuHistory',
        'x-etag': true,
        'x-problems': READ_ONE,
        summary: "Read a SKU's stored demand history",
        params: SkuParams,
        response: { 200: HistoryResource },
      },
      config: { etag: true },
    },
    async (request) => {
      const history = await requireHistories(app).get(request.tenant, request.params.sku)
      if (!history) throw new ProblemError('not-found', `No stored history for SKU ${request.params.sku}`)
      return toHistoryResource(history)
    },
  )
}

export default routes
