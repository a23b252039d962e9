import { z } from 'zod'
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { ProblemError } from '../../errors.js'

const Status = z.object({ status: z.string() })

/** Liveness and readiness; no API key needed, not rate limited. */
const routes: FastifyPluginAsyncZod = async (app) => {
  const open = { auth: false, rateLimit: false } as const

  app.get(
    '/healthz',
    {
      config: open,
      schema: {
        tags: ['operations'],
        operationId: 'getLiveness',
        'x-problems': ['internal'],
        summary: 'The process is alive',
        security: [],
        response: { 200: Status },
      },
    },
    async () => ({ status: 'ok' }),
  )

  app.get(
    '/readyz',
    {
      config: open,
      schema: {
        tags: ['operations'],
        operationId: 'getReadiness',
        'x-problems': ['not-ready', 'internal'],
        summary: 'Redis and the queue are usable',
        security: [],
        response: { 200: Status },
      },
    },
    async (request) => {
      try {
        await app.gateway.ping()
      } catch (err) {
        request.log.warn({ err }, 'not ready')
        throw new ProblemError('not-ready', 'The run store or queue is not reachable')
      }
      return { status: 'ready' }
    },
  )
}

export default routes
