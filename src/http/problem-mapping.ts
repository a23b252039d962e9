import type { FastifyError } from 'fastify'
import { formatFieldPath, MAX_FIELD_ERRORS, ProblemError, type FieldError } from '../errors.js'
import { CursorError } from '../storage/paging.js'
import { isFieldIssue } from './validation.js'
import { RunInputError } from '../runs/input.js'

export { MAX_FIELD_ERRORS }

/**
 * Turn anything a handler, hook or fastify itself threw into a ProblemError.
 * Client mistakes map to 4xx types; anything unrecognised is `internal`.
 */
export function toProblem(err: unknown, ctx: { bodyLimitBytes: number; bodyTypes?: readonly string[] }): ProblemError {
  if (err instanceof ProblemError) return err
  const e = err as Partial<FastifyError> & { validationContext?: string }
  if (err instanceof RunInputError || err instanceof CursorError) {
    return new ProblemError('validation-failed', err.message, [{ path: err.field, message: err.message }])
  }
  const unsupported = () => new ProblemError('unsupported-media-type', `Send the body as ${listOf(ctx.bodyTypes ?? ['application/json'])}`)
  if (Array.isArray(e.validation)) return validationProblem(e.validation, e.validationContext ?? 'body')
  if (isStoreUnavailable(err)) {
    return new ProblemError('not-ready', 'The run store is not reachable; retry shortly', undefined, { 'retry-after': '5' })
  }
  switch (e.code) {
    case 'FST_ERR_CTP_INVALID_JSON_BODY':
      return new ProblemError('malformed-json', 'The request body is not valid JSON')
    case 'FST_ERR_CTP_EMPTY_JSON_BODY':
      return new ProblemError('malformed-json', 'The request body is empty but Content-Type says JSON')
    case 'FST_ERR_CTP_BODY_TOO_LARGE':
      return new ProblemError('payload-too-large', `The request body is larger than ${ctx.bodyLimitBytes} bytes`)
    case 'FST_ERR_CTP_INVALID_MEDIA_TYPE':
      return unsupported()
  }
  const status = typeof e.statusCode === 'number' ? e.statusCode : 500
  if (status === 404) return new ProblemError('not-found')
  if (status === 413) return new ProblemError('payload-too-large')
  if (status === 415) return unsupported()
  if (status >= 400 && status < 500) {
    // Fastify's own client errors (bad content length, malformed header...): their messages are safe to show.
    // Any other error that happens to carry a 4xx status may hold internal detail: status only.
    const own = typeof e.code === 'string' && e.code.startsWith('FST_')
    return new ProblemError('bad-request', own && typeof e.message === 'string' ? e.message : undefined)
  }
  return new ProblemError('internal')
}

/** `a`, `a or b`, `a, b or c`. */
function listOf(items: readonly string[]): string {
  return items.length <= 1 ? (items[0] ?? '') : `${items.slice(0, -1).join(', ')} or ${items[items.length - 1]}`
}

const CONNECTION_CODES = new Set(['ECONNREFUSED', 'ECONNRESET', 'ETIMEDOUT', 'EPIPE', 'EHOSTUNREACH', 'ENOTFOUND'])

/**
 * True for errors of a Redis connection that is down or reconnecting (ioredis
 * gives up a command after maxRetriesPerRequest, or refuses it when offline):
 * a 503 the client may retry, not a 500.
 */
export function isStoreUnavailable(err: unknown): boolean {
  if (!(err instanceof Error)) return false
  const code = (err as { code?: unknown }).code
  return (
    err.name === 'MaxRetriesPerRequestError' ||
    err.message === 'Connection is closed.' ||
    err.message.startsWith("Stream isn't writeable") ||
    (typeof code === 'string' && CONNECTION_CODES.has(code))
  )
}

function validationProblem(issues: readonly unknown[], part: string): ProblemError {
  const errors: FieldError[] = issues.slice(0, MAX_FIELD_ERRORS).map((issue) => {
    if (isFieldIssue(issue)) return { path: formatFieldPath(issue.fieldPath, part), message: issue.message ?? 'invalid' }
    const v = issue as { instancePath?: string; message?: string }
    const segments = (v.instancePath ?? '').split('/').filter((s) => s !== '')
    return {
      path: formatFieldPath(segments.map((s) => (/^\d+$/.test(s) ? Number(s) : s)), part),
      message: v.message ?? 'invalid',
    }
  })
  const where = part === 'querystring' ? 'query string' : part === 'params' ? 'path' : part
  // Validation stops after the issues it reports (validation.ts): then the total is unknown.
  const truncated = (issues as { truncated?: boolean }).truncated === true
  const more = truncated || issues.length > MAX_FIELD_ERRORS ? `; the first ${MAX_FIELD_ERRORS} are listed` : ''
  const count = truncated
    ? `more than ${MAX_FIELD_ERRORS} invalid fields`
    : issues.length === 1
      ? '1 invalid field'
      : `${issues.length} invalid fields`
  return new ProblemError('validation-failed', `The request ${where} has ${count}${more}`, errors)
}
