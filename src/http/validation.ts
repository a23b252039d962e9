import type { FastifySchemaCompiler, FastifySchemaValidationError } from 'fastify'
import { safeParse, type $ZodType } from 'zod/v4/core'
import { fieldIssues } from '../errors.js'

/** A validation issue that keeps zod's path as an array (numbers are indexes). */
export interface FieldIssue extends FastifySchemaValidationError {
  readonly fieldPath: readonly PropertyKey[]
}

/**
 * Zod validator for request parts. Like fastify-type-provider-zod's, but it
 * keeps each issue's path as an array so the error handler can write
 * `series[3].demand[2]` rather than a JSON pointer, and names each unknown
 * field of a strict body on its own.
 */
export const validatorCompiler: FastifySchemaCompiler<$ZodType> =
  ({ schema }) =>
  (data) => {
    const result = safeParse(schema, data)
    if (result.success) return { value: result.data }
    const issues: FieldIssue[] = fieldIssues(result.error.issues).map(({ path, message, code }) => ({
      keyword: code,
      instancePath: `/${path.map(String).join('/')}`,
      schemaPath: '',
      params: {},
      message,
      fieldPath: path,
    }))
    return { error: issues }
  }

export function isFieldIssue(v: unknown): v is FieldIssue {
  return typeof v === 'object' && v !== null && Array.isArray((v as FieldIssue).fieldPath)
}
