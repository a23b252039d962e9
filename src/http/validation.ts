import type { FastifySchemaCompiler, FastifySchemaValidationError } from 'fastify'
import { safeParse, type $ZodType } from 'zod/v4/core'

/** A validation issue that keeps zod's path as an array (numbers are indexes). */
export interface FieldIssue extends FastifySchemaValidationError {
  readonly fieldPath: readonly PropertyKey[]
}

/**
 * Zod validator for request parts. Like fastify-type-provider-zod's, but it
 * keeps each issue's path as an array so the error handler can write
 * `series[3].values[2]` rather than a JSON pointer.
 */
export const validatorCompiler: FastifySchemaCompiler<$ZodType> =
  ({ schema }) =>
  (data) => {
    const result = safeParse(schema, data)
    if (result.success) return { value: result.data }
    const issues: FieldIssue[] = result.error.issues.map((issue) => ({
      keyword: issue.code,
      instancePath: `/${issue.path.map(String).join('/')}`,
      schemaPath: '',
      params: {},
      message: issue.message,
      fieldPath: issue.path,
    }))
    return { error: issues }
  }

export function isFieldIssue(v: unknown): v is FieldIssue {
  return typeof v === 'object' && v !== null && Array.isArray((v as FieldIssue).fieldPath)
}
