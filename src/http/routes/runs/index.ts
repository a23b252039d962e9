import { checkCallbackUrl } from '../../callback-url.js'
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { ProblemError } from '../../../errors.js'
import { RunIdParams } from '../../../schemas/params.js'
import { RunResource } from '../../../schemas/results.js'
import { pageSchema } from '../../../schemas/params.js'
import { RunListQuery } from '../../../schemas/run-list.js'
import { RunSubmission, toRunScope } from '../../../schemas/run.js'
import { parseRunSubmissionFast } from '../../../schemas/series-check.js'
import { bodyValidationError, fieldIssues, validatorCompiler } from '../../validation.js'
import { LargeJsonBody } from '../../body-threads/pool.js'
import { RunInputError } from '../../../runs/input.js'
import type { FastifyInstance } from 'fastify'
import type { RunRecord } from '../../../runs/contract.js'
import { submitStoredScope } from '../../run-scope.js'
import { IDEMPOTENT, READ, READ_ONE, WRITE, WRITE_ONE } from '../responses.js'

/** The run as clients see it: the record without its tenant. */
export function toRunResource(run: RunRecord): Omit<RunRecord, 'tenant'> {
  const { tenant: _tenant, ...resource } = run
  return resource
}

export function runNotFound(runId: string): ProblemError {
  return new ProblemError('not-found', `Run ${runId} not found`)
}

/**
 * A large run body, parsed, validated and cut into chunk inputs on the body
 * thread: every answer is the one the body would get on the event loop
 * (malformed JSON, each invalid field, a refused option), but the API never holds
 * its series as objects.
 */
async function submitLargeBody(app: FastifyInstance, tenant: string, body: LargeJsonBody): Promise<RunRecord> {
  const chunkSize = app.gateway.chunkSize
  if (!app.gateway.submitPrepared || chunkSize === undefined) throw new ProblemError('not-ready', 'Large run bodies are not configured on this server')
  const outcome = await app.bodyThreads.prepareRun({ blocks: body.blocks, chunkSize })
  switch (outcome.kind) {
    case 'malformed':
      throw new ProblemError('malformed-json', 'The request body is not valid JSON')
    case 'invalid':
      throw bodyValidationError(fieldIssues(outcome.issues, outcome.more))
    case 'refused':
      throw new RunInputError('invalid-option', outcome.message, outcome.field)
    case 'scope': {
      const { scope, series: _none, ...settings } = outcome.body
      checkCallbackUrl(app, settings.callbackUrl, 'callbackUrl')
      return submitStoredScope(app, tenant, settings, toRunScope(scope!))
    }
    case 'inline':
      checkCallbackUrl(app, outcome.settings.callbackUrl, 'callbackUrl')
      return app.gateway.submitPrepared(tenant, outcome.settings, outcome.total, outcome.chunks)
  }
}

/** /v1/runs: submit, read and cancel asynchronous runs. */
const routes: FastifyPluginAsyncZod = async (app) => {
  app.post(
    '',
    {
      schema: {
        tags: ['runs'],
        operationId: 'submitRun',
        'x-problems': [...WRITE, ...IDEMPOTENT],
        summary: 'Submit a forecast run',
        description:
          'Queues every series for forecasting and answers at once with the run; poll it at the Location header. ' +
          'Bodies up to the configured limit (default 64 MiB) are accepted; larger ones get 413. ' +
          'Instead of inline series, a run may forecast stored histories named by scope: { "scope": { "skus": [...] } } ' +
          '(a SKU without a stored history is a 400 listing it), { "scope": { "tags": [...] } } (SKUs carrying every tag) ' +
          'or { "scope": { "all": true } }. Honours Idempotency-Key.',
        body: RunSubmission,
        response: { 202: RunResource },
      },
      // A body of LARGE_JSON_BYTES or more arrives unparsed and is parsed, validated and cut on a thread (below).
      config: { idempotency: true, largeJsonOnThread: true },
      // Inline series are checked by a plain loop (same outcome as the schema); any body it cannot vouch for goes through zod.
      validatorCompiler: (route) => {
        const full = validatorCompiler(route as unknown as Parameters<typeof validatorCompiler>[0])
        if (route.httpPart !== 'body') return full
        return (data) => {
          if (data instanceof LargeJsonBody) return { value: data }
          const fast = parseRunSubmissionFast(data)
          return fast === null ? full(data) : { value: fast }
        }
      },
    },
    async (request, reply) => {
      const raw: unknown = request.body
      if (raw instanceof LargeJsonBody) {
        const bodyBytes = raw.blocks.reduce((n, b) => n + b.length, 0) // read before the blocks move to the thread
        const run = await submitLargeBody(app, request.tenant, raw)
        request.log.info({ runId: run.id, series: run.progress.total, stored: run.scope !== null, bodyBytes }, 'run submitted')
        reply.code(202).header('location', `/v1/runs/${encodeURIComponent(run.id)}`)
        return toRunResource(run)
      }
      const { series, scope, ...settings } = request.body
      checkCallbackUrl(app, settings.callbackUrl, 'callbackUrl')
      // The schema lets exactly one of series and scope through.
      const run = series
        ? await app.gateway.submit(request.tenant, { ...settings, series })
        : await submitStoredScope(app, request.tenant, settings, toRunScope(scope!))
      request.log.info({ runId: run.id, series: run.progress.total, stored: series === undefined }, 'run submitted')
      reply.code(202).header('location', `/v1/runs/${encodeURIComponent(run.id)}`)
      return toRunResource(run)
    },
  )

  app.get(
    '',
    {
      schema: {
        tags: ['runs'],
        operationId: 'listRuns',
        'x-problems': READ,
        summary: "List the tenant's runs, newest first",
        description:
          'Filters: status, origin (what started the run: inline, scope, schedule), scheduleId, createdFrom (inclusive) and ' +
          'createdTo (exclusive). Runs are listed while their record is kept (twice the result retention). A page reads ' +
          'at most 5,000 runs while filters skip them, so it may hold fewer than limit runs, even none, before the end: ' +
          'follow nextCursor until it is null.',
        querystring: RunListQuery,
        response: { 200: pageSchema(RunResource) },
      },
    },
    async (request) => {
      if (!app.gateway.listRuns) throw new ProblemError('not-ready', 'Listing runs is not configured on this server')
      const { limit, cursor, status, origin, scheduleId, createdFrom, createdTo } = request.query
      const page = await app.gateway.listRuns(
        request.tenant,
        {
          ...(status === undefined ? {} : { status }),
          ...(origin === undefined ? {} : { origin }),
          ...(scheduleId === undefined ? {} : { scheduleId }),
          ...(createdFrom === undefined ? {} : { createdFromMs: Date.parse(createdFrom) }),
          ...(createdTo === undefined ? {} : { createdToMs: Date.parse(createdTo) }),
        },
        { limit, ...(cursor === undefined ? {} : { cursor }) },
      )
      return { items: page.items.map(toRunResource), nextCursor: page.nextCursor }
    },
  )

  app.get(
    '/:runId',
    {
      schema: {
        tags: ['runs'],
        operationId: 'getRun',
        'x-etag': true,
        'x-problems': READ_ONE,
        summary: 'Read a run: status, progress, summary',
        description: 'Carries a strong ETag; send it back in If-None-Match to get 304 while nothing changed.',
        params: RunIdParams,
        response: { 200: RunResource },
      },
      config: { etag: true },
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
        operationId: 'cancelRun',
        'x-problems': WRITE_ONE,
        summary: 'Cancel a run',
        description:
          'Cancels a queued or running run and answers 200 with the run. Series already forecast keep their ' +
          'results. A finished run is returned unchanged.',
        params: RunIdParams,
        response: { 200: RunResource },
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
