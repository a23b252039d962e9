import { z } from 'zod'

/**
 * Values read back from Redis are input: another version of the service, a
 * hand edit or a bug may have written them. These decoders check them; a
 * value that does not decode is a StoredValueError naming what it was.
 */
export class StoredValueError extends Error {
  override readonly name = 'StoredValueError'
}

/** A hash field or key holding JSON, checked against `schema` once parsed (use inside other zod schemas). */
export const jsonOf = <T extends z.ZodType>(schema: T) =>
  z
    .string()
    .transform((text, ctx) => {
      try {
        return JSON.parse(text) as unknown
      } catch {
        ctx.addIssue({ code: 'custom', message: 'is not JSON' })
        return z.NEVER
      }
    })
    .pipe(schema)

/**
 * JSON text read from Redis, checked against `schema`.
 * @throws StoredValueError naming `what` when it is not JSON or not of that shape.
 */
export function decodeJson<T extends z.ZodType>(schema: T, text: string, what: string): z.output<T> {
  const parsed = jsonOf(schema).safeParse(text)
  if (!parsed.success) throw new StoredValueError(`${what} does not decode: ${issues(parsed.error)}`)
  return parsed.data
}

/** `value` when it is one of `values`. @throws StoredValueError otherwise. */
export function oneOf<const T extends string>(values: readonly T[], value: unknown, what: string): T {
  if (typeof value === 'string' && (values as readonly string[]).includes(value)) return value as T
  throw new StoredValueError(`${what} is ${JSON.stringify(value)}, not one of ${values.join(', ')}`)
}

/** A non-negative integer (a count read as a string or a number). @throws StoredValueError otherwise. */
export function countOf(value: unknown, what: string): number {
  const n = typeof value === 'string' && value.trim() !== '' ? Number(value) : value
  if (typeof n === 'number' && Number.isSafeInteger(n) && n >= 0) return n
  throw new StoredValueError(`${what} is ${JSON.stringify(value)}, not a count`)
}

/** A finite number read as a string. @throws StoredValueError otherwise. */
export function finiteOf(value: string | undefined, what: string): number {
  const n = value === undefined || value.trim() === '' ? NaN : Number(value)
  if (Number.isFinite(n)) return n
  throw new StoredValueError(`${what} is ${JSON.stringify(value)}, not a number`)
}

/** `failure` as stored: `{ code, message }`. */
export const FailureRecord = z.object({ code: z.string().min(1), message: z.string() })

function issues(error: z.ZodError): string {
  return error.issues.map((i) => `${i.path.join('.') || '(value)'} ${i.message}`).join('; ')
}
