import type { FastifySchemaCompiler, FastifySchemaValidationError } from 'fastify'
import type { $ZodType } from 'zod/v4/core'
import { MAX_FIELD_ERRORS } from '../errors.js'
import { boundedSafeParse } from '../schemas/bounded-parse.js'

/** A validation issue that keeps zod's path as an array (numbers are indexes). */
export interface FieldIssue extends FastifySchemaValidationError {
  readonly fieldPath: readonly PropertyKey[]
}

/** The issues of one request part; `truncated` when validation stopped before finding them all. */
export type FieldIssues = FieldIssue[] & { truncated?: boolean }

/**
 * Zod validator for request parts. Like fastify-type-provider-zod's, but it
 * keeps each issue's path as an array so the error handler can write
 * `series[3].demand[2]` rather than a JSON pointer, names each unknown
 * field of a strict body on its own, and stops after the issues it will
 * report (boundedSafeParse), so a huge invalid body costs little memory.
 */
export const validatorCompiler: FastifySchemaCompiler<$ZodType> =
  ({ schema }) =>
  (data) => {
    const result = boundedSafeParse(schema, data, MAX_FIELD_ERRORS)
    if (result.success) return { value: result.data }
    return { error: fieldIssues(result.issues, result.more) }
  }

/** Bounded-parse issues as the error handler reads them; `more` when validation stopped before the end. */
export function fieldIssues(found: readonly { readonly path: readonly PropertyKey[]; readonly message: string; readonly code: string }[], more: boolean): FieldIssues {
  const issues: FieldIssues = found.map(({ path, message, code }) => ({
    keyword: code,
    instancePath: `/${path.map(String).join('/')}`,
    schemaPath: '',
    params: {},
    message,
    fieldPath: path,
  }))
  if (more) issues.truncated = true
  return issues
}

/** The error fastify throws for a body its validator refused, for a body validated elsewhere (a thread). */
export function bodyValidationError(issues: FieldIssues): Error & { validation: FieldIssues; validationContext: 'body'; statusCode: 400 } {
  return Object.assign(new Error('body validation failed'), { validation: issues, validationContext: 'body' as const, statusCode: 400 as const })
}

export function isFieldIssue(v: unknown): v is FieldIssue {
  return typeof v === 'object' && v !== null && Array.isArray((v as FieldIssue).fieldPath)
}
