import { z } from 'zod'
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { ProblemError } from '../../errors.js'
import { checkCallbackUrl } from '../callback-url.js'
import { CallbackUrl } from '../../schemas/run.js'
import { MAX_CALLBACKS_PER_TENANT } from '../../storage/erp/callback-store.js'
import { requireErp } from '../plugins/erp.js'
import { PageQuery, pageSchema } from '../../schemas/params.js'
import { READ, READ_ONE, WRITE, WRITE_ONE } from './responses.js'
import { RUN_EVENTS } from '../../runs/contract.js'

const SIGNING =
  'Every delivery is a POST with a JSON body and the headers Almanac-Event, Almanac-Delivery (an id unique to the ' +
  'delivery and the same on each of its retries), Almanac-Sent-At (Unix seconds) and Almanac-Signature: ' +
  'hmac-sha256=<hex HMAC-SHA256 of the three lines `${delivery}\\n${sentAt}\\n${body}` with the tenant\'s signing secret>. ' +
  'Verify it over the raw body with a constant-time compare, reject Sent-At more than 5 minutes from your clock, and ' +
  'drop a delivery id seen before. For a day after a rotation the header holds two comma-separated signatures, one ' +
  'per secret; one match is enough. Redirects are not followed; any answer but 2xx is retried with exponential backoff.'

const CallbackBody = z.strictObject({
  url: CallbackUrl,
  events: z.array(z.enum(RUN_EVENTS)).min(1).max(RUN_EVENTS.length).describe('Events to be called for'),
})

const CallbackResource = z
  .object({
    id: z.string(),
    url: z.string(),
    events: z.array(z.enum(RUN_EVENTS)),
    createdAt: z.string().describe('ISO-8601'),
  })
  .meta({ id: 'Callback' })

const CallbackCreated = CallbackResource.extend({
  secret: z
    .string()
    .optional()
    .describe('The signing secret, present only when this request created it; it is never shown again (rotate to get a new one)'),
})

const CallbackParams = z.object({ callbackId: z.string().regex(/^[A-Za-z0-9-]{1,64}$/, 'is not a callback id') })

/** /v1/callbacks: standing callbacks and the tenant's signing secret. */
const routes: FastifyPluginAsyncZod = async (app) => {
  app.post(
    '',
    {
      schema: {
        tags: ['callbacks'],
        operationId: 'createCallback',
        'x-problems': [...WRITE, 'limit-reached'],
        summary: 'Register a standing callback for run events',
        description: `Called for every run of the tenant that ends with one of the events. ${SIGNING}`,
        body: CallbackBody,
        response: { 201: CallbackCreated },
      },
    },
    async (request, reply) => {
      checkCallbackUrl(app, request.body.url, 'url')
      const erp = requireErp(app)
      const fresh = !(await erp.callbacks.hasSecret(request.tenant))
      const cb = await erp.callbacks.add(request.tenant, request.body.url, request.body.events, new Date())
      if (cb === null) throw new ProblemError('limit-reached', `A tenant may have at most ${MAX_CALLBACKS_PER_TENANT} callbacks`)
      const secret = fresh ? (await erp.callbacks.signingSecrets(request.tenant))[0] : undefined
      request.log.info({ callbackId: cb.id, events: cb.events }, 'callback registered')
      reply.code(201).header('location', `/v1/callbacks/${cb.id}`)
      return { ...cb, events: [...cb.events], ...(secret === undefined ? {} : { secret }) }
    },
  )

  app.get(
    '',
    {
      schema: {
        tags: ['callbacks'],
        operationId: 'listCallbacks',
        'x-problems': READ,
        summary: 'List standing callbacks, oldest first',
        querystring: PageQuery,
        response: { 200: pageSchema(CallbackResource) },
      },
    },
    async (request) => {
      const page = await requireErp(app).callbacks.list(request.tenant, request.query.limit, request.query.cursor)
      return { items: page.items.map((c) => ({ ...c, events: [...c.events] })), nextCursor: page.nextCursor }
    },
  )

  app.get(
    '/:callbackId',
    {
      schema: {
        tags: ['callbacks'],
        operationId: 'getCallback',
        'x-problems': READ_ONE,
        summary: 'Read a standing callback',
        params: CallbackParams,
        response: { 200: CallbackResource },
      },
    },
    async (request) => {
      const cb = await requireErp(app).callbacks.get(request.tenant, request.params.callbackId)
      if (!cb) throw new ProblemError('not-found', `Callback ${request.params.callbackId} not found`)
      return { ...cb, events: [...cb.events] }
    },
  )

  app.delete(
    '/:callbackId',
    {
      schema: {
        tags: ['callbacks'],
        operationId: 'deleteCallback',
        'x-problems': WRITE_ONE,
        summary: 'Remove a standing callback',
        description: 'Deliveries already queued still go out.',
        params: CallbackParams,
        response: { 204: z.null().describe('Removed') },
      },
    },
    async (request, reply) => {
      const removed = await requireErp(app).callbacks.remove(request.tenant, request.params.callbackId)
      if (!removed) throw new ProblemError('not-found', `Callback ${request.params.callbackId} not found`)
      reply.code(204)
      return null
    },
  )

  app.post(
    '/secret',
    {
      schema: {
        tags: ['callbacks'],
        operationId: 'rotateCallbackSecret',
        'x-problems': WRITE,
        summary: 'Create or rotate the signing secret',
        description:
          'Returns a new signing secret: deliveries from now on are signed with it, and for a day also with the old one ' +
          '(two comma-separated signatures), so receivers can switch without losing a delivery. ' +
          'This response is the only place the secret appears. A tenant that never called this gets a secret on first ' +
          'use (first standing callback, shown in that response, or first delivery, then call this to learn it).',
        response: { 200: z.object({ secret: z.string().describe('64 hex characters') }) },
      },
    },
    async (request) => {
      const secret = await requireErp(app).callbacks.rotateSecret(request.tenant)
      request.log.info('signing secret rotated')
      return { secret }
    },
  )
}

export default routes
