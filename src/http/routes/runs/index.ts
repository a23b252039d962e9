import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { ProblemError } from '../../../errors.js'
import { RunIdParams } from '../../../schemas/params.js'
import { RunResource } from '../../../schemas/results.js'
import { RunRequest } from '../../../schemas/run.js'
import type { RunRecord } from '../../../storage/types.js'
import { BODY_PROBLEMS, COMMON_PROBLEMS, NOT_FOUND } from '../responses.js'

/** The run as clients see it: the record without its tenant. */
export function toRunResource(run: RunRecord): Omit<RunRecord, 'tenant'> {
  const { tenant: _tenant, ...resource } = run
  return resource
}

export function runNotFound(runId: string): ProblemError {
  return new ProblemError('not-found', `Run ${runId} not found`)
}

/** /v1/runs: submit, read and cancel asynchronous runs. */
const routes: FastifyPluginAsyncZod = async (app) => {
  app.post(
    '',
    {
      schema: {
        tags: ['runs'],
        summary: 'Submit a forecast run',
        description:
          'Queues every series for forecasting and answers at once with the run; poll it at the Location header. ' +
          'Bodies up to the configured limit (default 64 MiB) are accepted; larger ones get 413.',
        body: RunRequest,
        response: { 202: RunResource, ...COMMON_PROBLEMS, ...BODY_PROBLEMS },
      },
    },
    async (request, reply) => {
      const run = await app.gateway.submit(request.tenant, request.body)
      request.log.info({ runId: run.id, series: request.body.series.length }, 'run submitted')
      reply.code(202).header('location', `/v1/runs/${encodeURIComponent(run.id)}`)
      return toRunResource(run)
    },
  )

  app.get(
    '/:runId',
    {
      schema: {
        tags: ['runs'],
        summary: 'Read a run: status, progress, summary',
        params: RunIdParams,
        response: { 200: RunResource, ...COMMON_PROBLEMS, ...NOT_FOUND },
      },
    },
    async (request) => {
      const run = await app.gateway.get(request.tenant, request.params.runId)
      if (!run) throw runNotFound(request.params.runId)
      return toRunResource(run)
    },
  )

  app.delete(
    '/:runId',
    {
      schema: {
        tags: ['runs'],
        summary: 'Cancel a run',
        description:
          'Cancels a queued or running run and answers 200 with the run. Series already forecast keep their ' +
          'results. A finished run is returned unchanged.',
        params: RunIdParams,
        response: { 200: RunResource, ...COMMON_PROBLEMS, ...NOT_FOUND },
      },
    },
    async (request) => {
      const run = await app.gateway.cancel(request.tenant, request.params.runId)
      if (!run) throw runNotFound(request.params.runId)
      request.log.info({ runId: run.id, status: run.status }, 'run cancel requested')
      return toRunResource(run)
    },
  )
}

export default routes
