import { z } from 'zod'
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { ProblemError } from '../../errors.js'
import { Problem } from '../../schemas/problem.js'
import { RunSettings, Sku } from '../../schemas/run.js'
import { ScheduleInputError } from '../../schedules/service.js'
import { MAX_SCHEDULES_PER_TENANT, type ScheduleSelection } from '../../storage/schedule-store.js'
import { requireErp } from '../plugins/erp.js'
import { BODY_PROBLEMS, COMMON_PROBLEMS, NOT_FOUND } from './responses.js'

const Selection = z
  .union([
    z.object({ skus: z.array(Sku).min(1).max(100_000).describe('These SKUs (those without a stored history are skipped)') }).strict(),
    z.object({ tags: z.array(z.string().min(1).max(64)).min(1).max(10).describe('SKUs carrying every tag') }).strict(),
    z.object({ all: z.literal(true).describe('Every SKU with a stored history') }).strict(),
  ])
  .describe('Which stored histories each firing forecasts')

const ScheduleBody = z.object({
  name: z.string().min(1).max(200).optional(),
  cron: z
    .string()
    .min(1)
    .max(200)
    .describe('Cron pattern: minute hour day-of-month month day-of-week (or 6 fields with seconds first), e.g. `0 2 * * 1-5`'),
  timeZone: z.string().min(1).max(100).describe('IANA time zone the pattern is read in, e.g. Europe/Berlin'),
  selection: Selection,
  settings: RunSettings.describe('Run settings of each firing, as for POST /v1/runs without series'),
})

const ScheduleResource = z
  .object({
    id: z.string(),
    name: z.string().nullable(),
    cron: z.string(),
    timeZone: z.string(),
    selection: Selection,
    settings: RunSettings,
    createdAt: z.string(),
    nextFireAt: z.string().nullable().describe('ISO-8601'),
    state: z.object({
      currentRunId: z.string().nullable().describe('Run of the latest firing that submitted one'),
      lastFiredAt: z.string().nullable(),
      fired: z.number().int().describe('Firings that submitted a run'),
      skipped: z.number().int().describe('Firings skipped because the previous run was still queued or running'),
      failed: z.number().int().describe('Firings whose run could not be submitted'),
      lastError: z.string().nullable(),
    }),
  })
  .meta({ id: 'Schedule' })

const ScheduleParams = z.object({ scheduleId: z.string().regex(/^[A-Za-z0-9-]{1,64}$/, 'is not a schedule id') })
const ListQuery = z.object({
  limit: z.coerce.number().int().min(1).max(100).default(50),
  cursor: z.string().regex(/^[A-Za-z0-9-]{1,64}$/, 'is not a cursor returned by this API').optional(),
})

const notFound = (id: string) => new ProblemError('not-found', `Schedule ${id} not found`)
type Body = z.input<typeof ScheduleResource>

/** /v1/schedules: runs that start by themselves (e.g. every night) over stored histories. */
const routes: FastifyPluginAsyncZod = async (app) => {
  app.post(
    '',
    {
      schema: {
        tags: ['schedules'],
        summary: 'Create a schedule',
        description:
          'Each firing submits a run over the selected stored histories with the given settings. A firing while the ' +
          "schedule's previous run is still queued or running is skipped (counted in state.skipped).",
        body: ScheduleBody,
        response: { 201: ScheduleResource, ...COMMON_PROBLEMS, ...BODY_PROBLEMS, 409: Problem },
      },
    },
    async (request, reply) => {
      const erp = requireErp(app)
      let created
      try {
        created = await erp.schedules.create(request.tenant, { ...request.body, selection: request.body.selection as ScheduleSelection })
      } catch (err) {
        if (err instanceof ScheduleInputError) {
          throw new ProblemError('validation-failed', `The request body has ${err.errors.length} invalid field(s)`, err.errors)
        }
        throw err
      }
      if (created === null) throw new ProblemError('limit-reached', `A tenant may have at most ${MAX_SCHEDULES_PER_TENANT} schedules`)
      request.log.info({ scheduleId: created.id, cron: created.cron, timeZone: created.timeZone }, 'schedule created')
      reply.code(201).header('location', `/v1/schedules/${created.id}`)
      return created as Body
    },
  )

  app.get(
    '',
    {
      schema: {
        tags: ['schedules'],
        summary: 'List schedules, oldest first',
        querystring: ListQuery,
        response: { 200: z.object({ items: z.array(ScheduleResource), nextCursor: z.string().nullable() }), ...COMMON_PROBLEMS },
      },
    },
    async (request) => {
      const page = await requireErp(app).schedules.list(request.tenant, request.query.limit, request.query.cursor)
      return page as { items: Body[]; nextCursor: string | null }
    },
  )

  app.get(
    '/:scheduleId',
    {
      schema: {
        tags: ['schedules'],
        summary: 'Read a schedule with its firing counts',
        params: ScheduleParams,
        response: { 200: ScheduleResource, ...COMMON_PROBLEMS, ...NOT_FOUND },
      },
    },
    async (request) => {
      const s = await requireErp(app).schedules.get(request.tenant, request.params.scheduleId)
      if (!s) throw notFound(request.params.scheduleId)
      return s as Body
    },
  )

  app.delete(
    '/:scheduleId',
    {
      schema: {
        tags: ['schedules'],
        summary: 'Delete a schedule',
        description: 'No further firings; a run it already started keeps going.',
        params: ScheduleParams,
        response: { 204: z.null().describe('Deleted'), ...COMMON_PROBLEMS, ...NOT_FOUND },
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
