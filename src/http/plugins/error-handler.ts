import fp from 'fastify-plugin'
import { PROBLEM_CONTENT_TYPE, ProblemError } from '../../errors.js'
import { toProblem } from '../problem-mapping.js'

/**
 * Every error leaves as RFC 9457 problem details. 5xx bodies say only
 * `Internal Server Error` (or `Service not ready`); the full error is logged.
 */
export default fp(
  async (app) => {
    app.setErrorHandler((err, request, reply) => {
      const bodyTypes = request.routeOptions.config?.bodyTypes
      const problem = toProblem(err, { bodyLimitBytes: app.config.bodyLimitBytes, ...(bodyTypes ? { bodyTypes } : {}) })
      if (problem.statusCode >= 500 && problem.slug === 'internal') {
        request.log.error({ err }, 'request failed')
      } else {
        request.log.info({ problem: problem.slug, status: problem.statusCode, detail: problem.detail }, 'request rejected')
      }
      reply.code(problem.statusCode).type(PROBLEM_CONTENT_TYPE).headers(problem.headers)
      return problem.toBody()
    })

    app.setNotFoundHandler((request, reply) => {
      const path = (request.url.split('?')[0] ?? '').slice(0, 200)
      const problem = new ProblemError('not-found', `No route ${request.method} ${path}`)
      reply.code(404).type(PROBLEM_CONTENT_TYPE)
      return problem.toBody()
    })
  },
  { name: 'error-handler', dependencies: ['config'] },
)
