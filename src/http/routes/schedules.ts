import { z } from 'zod'
import type { FastifyInstance } from 'fastify'
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { checkCallbackUrl } from '../callback-url.js'
import { DEFAULT_SCHEDULE_MAX_SKUS } from '../../config.js'
import { fieldIssues, formatFieldPath, ProblemError } from '../../errors.js'
import { PageQuery, pageSchema } from '../../schemas/params.js'
import { RunScope, RunSettings, toRunScope } from '../../schemas/run.js'
import { Failure } from '../../schemas/results.js'
import { ScheduleInputError, type ScheduleInput, type ScheduleView } from '../../schedules/service.js'
import { MAX_SCHEDULES_PER_TENANT } from '../../storage/erp/schedule-store.js'
import { requireErp } from '../plugins/erp.js'
import { READ, READ_ONE, WRITE, WRITE_ONE } from './responses.js'

/** The run settings of each firing (as for POST /v1/runs, without series), plus when and over what. */
const ScheduleBody = RunSettings.extend({
  name: z.string().min(1).max(200).optional(),
  cron: z
    .string()
    .min(1)
    .max(200)
    .describe('Cron pattern: minute hour day-of-month month day-of-week (or 6 fields with seconds first), e.g. `0 2 * * 1-5`'),
  timeZone: z.string().min(1).max(100).describe('IANA time zone the pattern is read in, e.g. Europe/Berlin'),
  scope: RunScope.describe('Which stored histories each firing forecasts'),
})

/** A field's own type, without the default or optional wrapper of the create body (a patch fills in nothing). */
function bare(t: z.ZodType): z.ZodType {
  let inner = t
  while (inner instanceof z.ZodDefault || inner instanceof z.ZodOptional) inner = inner.unwrap() as z.ZodType
  return inner
}

/**
 * PATCH /v1/schedules/{id}: JSON merge patch (RFC 7396) of the create body's fields,
 * one level deep: a field given replaces the stored one whole (scope and replenishment
 * included), null removes an optional field (its default applies again). `paused`
 * pauses or resumes the schedule.
 */
const SchedulePatch = z
  .strictObject({
    ...Object.fromEntries(Object.entries(ScheduleBody.shape).map(([field, t]) => [field, bare(t as z.ZodType).nullable().optional()])),
    paused: z
      .boolean()
      .optional()
      .describe('true: the schedule stops firing; false: it fires again from the next slot on (slots missed while paused are not fired)'),
  })
  .meta({
    id: 'SchedulePatch',
    description:
      'Fields of the create body to change, and paused. A field given replaces the stored one whole (scope and replenishment ' +
      'included); null removes an optional field so its default applies again. The result is checked exactly as a new schedule.',
  })

const Count = z.number().int().min(0)

const ScheduleResource = RunSettings.extend({
  id: z.string(),
  name: z.string().nullable(),
  cron: z.string(),
  timeZone: z.string(),
  scope: RunScope,
  paused: z.boolean().describe('A paused schedule does not fire (PATCH with paused)'),
  createdAt: z.string().describe('ISO-8601'),
  nextFireAt: z.string().nullable().describe('ISO-8601; null while paused'),
  firings: z.object({
    submitted: Count.describe('Firings that submitted a run'),
    skipped: Count.describe('Firings skipped because the run of the previous one was still queued or running'),
    failed: Count.describe('Firings whose run could not be submitted'),
    missingSkus: Count.describe('SKUs of scope.skus without a stored history when a firing ran (deleted since), summed over firings'),
    lastFiredAt: z.string().nullable().describe('ISO-8601'),
    currentRunId: z.string().nullable().describe('Run of the latest firing that submitted one'),
    lastFailure: Failure.nullable().describe('Why the latest firing that failed could not submit its run; cleared by a successful one'),
  }),
}).meta({ id: 'Schedule' })

const ScheduleParams = z.object({ scheduleId: z.string().regex(/^[A-Za-z0-9-]{1,64}$/, 'is not a schedule id') })

type Body = z.input<typeof ScheduleResource>

/** A schedule as clients see it: the run settings at the top level, beside when and over what. */
function toResource(s: ScheduleView): Body {
  return {
    id: s.id,
    name: s.name,
    cron: s.cron,
    timeZone: s.timeZone,
    scope: s.scope as Body['scope'],
    ...s.settings,
    paused: s.paused,
    createdAt: s.createdAt,
    nextFireAt: s.nextFireAt,
    firings: s.firings,
  }
}

const MERGE_PATCH = 'application/merge-patch+json'

const notFound = (id: string) => new ProblemError('not-found', `Schedule ${id} not found`)

type CreateBody = z.infer<typeof ScheduleBody>

/** The create body of a stored schedule: what a patch is merged into. */
function toCreateBody(s: ScheduleView): Record<string, unknown> {
  return { ...(s.name === null ? {} : { name: s.name }), cron: s.cron, timeZone: s.timeZone, scope: s.scope, ...s.settings }
}

/**
 * The checks of the route beyond the schema, the same for create and patch: the
 * callback URL, and at most SCHEDULE_MAX_SKUS SKUs named. Returns the service's input.
 */
function scheduleInput(app: FastifyInstance, body: CreateBody): ScheduleInput {
  checkCallbackUrl(app, body.callbackUrl, 'callbackUrl')
  // A schedule's selection is stored and listed with it: bounded far below a run's.
  const maxSkus = app.config.scheduleMaxSkus ?? DEFAULT_SCHEDULE_MAX_SKUS
  const named = body.scope.skus?.length ?? 0
  if (named > maxSkus) {
    const why = `a schedule names at most ${maxSkus} SKUs (SCHEDULE_MAX_SKUS), this one ${named}; select by tags or all instead`
    throw new ProblemError('validation-failed', why, [{ path: 'scope.skus', message: why }])
  }
  const { name, cron, timeZone, scope, ...settings } = body
  return { ...(name === undefined ? {} : { name }), cron, timeZone, scope: toRunScope(scope), settings }
}

/** The service's refusal as a 400 listing the fields. */
function asProblem(err: unknown): unknown {
  if (err instanceof ScheduleInputError) {
    return new ProblemError('validation-failed', `The request body has ${err.errors.length} invalid field(s)`, err.errors)
  }
  return err
}

/** /v1/schedules: runs that start by themselves (e.g. every night) over stored histories. */
const routes: FastifyPluginAsyncZod = async (app) => {
  // RFC 7396's own media type for PATCH bodies, read as JSON (this plugin's routes only).
  const parseJson = app.getDefaultJsonParser('error', 'error')
  app.addContentTypeParser(MERGE_PATCH, { parseAs: 'string' }, (request, body, done) => {
    void parseJson(request, body.toString(), done)
  })

  app.post(
    '',
    {
      schema: {
        tags: ['schedules'],
        operationId: 'createSchedule',
        'x-problems': [...WRITE, 'limit-reached'],
        summary: 'Create a schedule',
        description:
          'Each firing submits a run over the stored histories of the scope with the given settings. A SKU of ' +
          'scope.skus without a stored history is a 400 listing it; one deleted later is skipped when the schedule ' +
          "fires and counted in firings.missingSkus. A firing while the schedule's previous run is still queued or " +
          'running is skipped (counted in firings.skipped).',
        body: ScheduleBody,
        response: { 201: ScheduleResource },
      },
    },
    async (request, reply) => {
      const input = scheduleInput(app, request.body)
      const erp = requireErp(app)
      let created
      try {
        created = await erp.schedules.create(request.tenant, input)
      } catch (err) {
        throw asProblem(err)
      }
      if (created === null) throw new ProblemError('limit-reached', `A tenant may have at most ${MAX_SCHEDULES_PER_TENANT} schedules`)
      request.log.info({ scheduleId: created.id, cron: created.cron, timeZone: created.timeZone }, 'schedule created')
      reply.code(201).header('location', `/v1/schedules/${created.id}`)
      return toResource(created)
    },
  )

  app.get(
    '',
    {
      schema: {
        tags: ['schedules'],
        operationId: 'listSchedules',
        'x-problems': READ,
        summary: 'List schedules, oldest first',
        querystring: PageQuery,
        response: { 200: pageSchema(ScheduleResource) },
      },
    },
    async (request) => {
      const page = await requireErp(app).schedules.list(request.tenant, request.query.limit, request.query.cursor)
      return { items: page.items.map(toResource), nextCursor: page.nextCursor }
    },
  )

  app.get(
    '/:scheduleId',
    {
      schema: {
        tags: ['schedules'],
        operationId: 'getSchedule',
        'x-problems': READ_ONE,
        summary: 'Read a schedule with its firing counts',
        params: ScheduleParams,
        response: { 200: ScheduleResource },
      },
    },
    async (request) => {
      const s = await requireErp(app).schedules.get(request.tenant, request.params.scheduleId)
      if (!s) throw notFound(request.params.scheduleId)
      return toResource(s)
    },
  )

  app.patch(
    '/:scheduleId',
    {
      schema: {
        tags: ['schedules'],
        operationId: 'updateSchedule',
        'x-problems': WRITE_ONE,
        summary: 'Change, pause or resume a schedule',
        description:
          'A JSON merge patch (RFC 7396; application/json or application/merge-patch+json) of the fields of the create body, one level deep: a field given replaces the ' +
          'stored one whole (scope and replenishment included); null removes an optional field so its default applies ' +
          'again. The result is checked exactly as a new schedule (SKUs of scope.skus only when scope is in the patch). ' +
          '"paused": true stops the firings (nextFireAt becomes null); "paused": false resumes them from the next slot ' +
          'after now: slots missed while paused are not fired. Firing counters and a run already started stay.',
        params: ScheduleParams,
        body: SchedulePatch,
        response: { 200: ScheduleResource },
        'x-requestBodies': { [MERGE_PATCH]: { schema: { $ref: '#/components/schemas/SchedulePatchInput' } } },
      },
      config: { bodyTypes: ['application/json', MERGE_PATCH] },
    },
    async (request) => {
      const erp = requireErp(app)
      const { scheduleId } = request.params
      const current = await erp.schedules.get(request.tenant, scheduleId)
      if (!current) throw notFound(scheduleId)
      const { paused, ...patch } = request.body as Record<string, unknown> & { paused?: boolean }
      const merged = toCreateBody(current)
      for (const [field, value] of Object.entries(patch)) {
        if (value === null) delete merged[field]
        else if (value !== undefined) merged[field] = value
      }
      const parsed = ScheduleBody.safeParse(merged)
      if (!parsed.success) {
        const errors = fieldIssues(parsed.error.issues).map((i) => ({ path: formatFieldPath(i.path, 'body'), message: i.message }))
        throw new ProblemError('validation-failed', `The schedule after this patch has ${errors.length} invalid field(s)`, errors)
      }
      const input = scheduleInput(app, parsed.data)
      let updated
      try {
        updated = await erp.schedules.update(request.tenant, scheduleId, { ...input, paused: paused ?? current.paused }, 'scope' in patch)
      } catch (err) {
        throw asProblem(err)
      }
      if (!updated) throw notFound(scheduleId)
      request.log.info({ scheduleId, fields: Object.keys(patch).length, paused: updated.paused }, 'schedule updated')
      return toResource(updated)
    },
  )

  app.delete(
    '/:scheduleId',
    {
      schema: {
        tags: ['schedules'],
        operationId: 'deleteSchedule',
        'x-problems': WRITE_ONE,
        summary: 'Delete a schedule',
        description: 'No further firings; a run it already started keeps going.',
        params: ScheduleParams,
        response: { 204: z.null().describe('Deleted') },
      },
    },
    async (request, reply) => {
      const removed = await requireErp(app).schedules.remove(request.tenant, request.params.scheduleId)
      if (!removed) throw notFound(request.params.scheduleId)
      reply.code(204)
      return null
    },
  )
}

export default routes
