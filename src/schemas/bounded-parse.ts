import { safeParse, type $ZodType } from 'zod/v4/core'
import { fieldIssues } from '../errors.js'

/** One offending field, path as an array (numbers are indexes). */
export interface BoundedIssue {
  readonly path: readonly PropertyKey[]
  readonly message: string
  readonly code: string
}

export type BoundedResult<T> =
  | { readonly success: true; readonly data: T }
  /** `more`: validation stopped early, so there are more issues than `issues` lists. */
  | { readonly success: false; readonly issues: readonly BoundedIssue[]; readonly more: boolean }

/** Arrays longer than this are checked element by element, so a check can stop partway. */
const ELEMENT_WISE_FROM = 32

/**
 * `schema.safeParse(data)` that stops after `maxIssues` issues. Zod collects
 * every issue of a body before answering, and a body of millions of bad
 * values made millions of issue objects (gigabytes) before the answer was cut
 * to its first 100. Here the long arrays (and unknown keys of strict objects)
 * are checked first, one element at a time, and the check stops once it has
 * more issues than it will report. A body that does not reach that many goes
 * through the whole schema, whose issues are then few: the answer is exactly
 * the schema's whenever it has at most `maxIssues` issues.
 */
export function boundedSafeParse<T>(schema: $ZodType<T>, data: unknown, maxIssues: number): BoundedResult<T> {
  const sink: BoundedIssue[] = []
  if (walk(schema, data, [], sink, maxIssues + 1)) return { success: false, issues: sink.slice(0, maxIssues), more: true }
  const result = safeParse(schema, data)
  if (result.success) return { success: true, data: result.data }
  const issues = fieldIssues(result.error.issues)
  return { success: false, issues: issues.slice(0, maxIssues), more: issues.length > maxIssues }
}

interface Def {
  readonly type: string
  readonly innerType?: $ZodType
  readonly in?: $ZodType
  readonly shape?: Readonly<Record<string, $ZodType>>
  readonly catchall?: $ZodType
  readonly element?: $ZodType
}

const def = (s: $ZodType): Def => s._zod.def as unknown as Def

/** The schema a wrapper (optional, default, nullable, pipe...) checks its input against. */
function unwrap(schema: $ZodType): $ZodType {
  let s = schema
  for (let d = def(s); ; d = def(s)) {
    const next = d.innerType ?? (d.type === 'pipe' ? d.in : undefined)
    if (next === undefined) return s
    s = next
  }
}

function isPlainObject(x: unknown): x is Record<string, unknown> {
  return typeof x === 'object' && x !== null && !Array.isArray(x)
}

/** Adds issues found in the long arrays below `data`; returns true once `sink` holds `limit` issues. */
function walk(schema: $ZodType, data: unknown, path: PropertyKey[], sink: BoundedIssue[], limit: number): boolean {
  const s = unwrap(schema)
  const d = def(s)
  if (d.type === 'object' && d.shape !== undefined && isPlainObject(data)) {
    const strict = d.catchall !== undefined && def(d.catchall).type === 'never'
    for (const key in data) {
      if (!Object.prototype.hasOwnProperty.call(data, key)) continue
      // Own keys only: a body key such as "constructor" must not find Object's own members on the shape.
      const field = Object.prototype.hasOwnProperty.call(d.shape, key) ? d.shape[key] : undefined
      if (field === undefined) {
        if (strict && push(sink, limit, { path: [...path, key], message: 'is not a field of this request', code: 'unrecognized_keys' })) return true
      } else if (walk(field, data[key], [...path, key], sink, limit)) return true
    }
    return false
  }
  if (d.type === 'array' && d.element !== undefined && Array.isArray(data)) {
    const long = data.length > ELEMENT_WISE_FROM
    for (let i = 0; i < data.length; i++) {
      const at = [...path, i]
      const before = sink.length
      if (walk(d.element, data[i], at, sink, limit)) return true
      // A long array's elements are checked whole here (their own long arrays passed above), so none piles up issues.
      if (long && sink.length === before) {
        const r = safeParse(d.element, data[i])
        if (!r.success) {
          for (const issue of fieldIssues(r.error.issues)) {
            if (push(sink, limit, { ...issue, path: [...at, ...issue.path] })) return true
          }
        }
      }
    }
  }
  return false
}

function push(sink: BoundedIssue[], limit: number, issue: BoundedIssue): boolean {
  sink.push(issue)
  return sink.length >= limit
}
