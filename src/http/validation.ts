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
    const issues: FieldIssues = result.issues.map(({ path, message, code }) => ({
      keyword: code,
      instancePath: `/${path.map(String).join('/')}`,
      schemaPath: '',
      params: {},
      message,
      fieldPath: path,
    }))
    if (result.more) issues.truncated = true
    return { error: issues }
  }

export function isFieldIssue(v: unknown): v is FieldIssue {
  return typeof v === 'object' && v !== null && Array.isArray((v as FieldIssue).fieldPath)
}
