import type { $ZodIssue } from 'zod/v4/core'

/**
 * Catalogue of every problem type the API answers with (RFC 9457 problem
 * details, `application/problem+json`). docs/problems.md lists the same types;
 * test/errors.test.ts keeps the two in step.
 */

export const PROBLEM_BASE_URI = 'https://almanac.example/problems/'
export const PROBLEM_CONTENT_TYPE = 'application/problem+json'

export const PROBLEM_TYPES = {
  'validation-failed': { status: 400, title: 'Validation failed' },
  'malformed-json': { status: 400, title: 'Malformed JSON' },
  'bad-request': { status: 400, title: 'Bad request' },
  unauthorized: { status: 401, title: 'Unauthorized' },
  'not-found': { status: 404, title: 'Not found' },
  'idempotency-key-in-use': { status: 409, title: 'Idempotency key in use' },
  'limit-reached': { status: 409, title: 'Limit reached' },
  'period-closed': { status: 409, title: 'A later period is closed' },
  'adjustment-conflict': { status: 409, title: 'Adjustment conflict' },
  'payload-too-large': { status: 413, title: 'Payload too large' },
  'too-many-series': { status: 413, title: 'Too many series for a synchronous forecast' },
  'fit-cost-too-high': { status: 413, title: 'Too much fitting work for a synchronous forecast' },
  'unsupported-media-type': { status: 415, title: 'Unsupported media type' },
  'idempotency-key-reused': { status: 422, title: 'Idempotency key reused' },
  'period-not-adjustable': { status: 422, title: 'Period not adjustable' },
  'rate-limited': { status: 429, title: 'Too many requests' },
  internal: { status: 500, title: 'Internal Server Error' },
  'not-ready': { status: 503, title: 'Service not ready' },
} as const satisfies Record<string, { status: number; title: string }>

export type ProblemSlug = keyof typeof PROBLEM_TYPES

/** Most field errors listed in one response; validation stops looking after them. */
export const MAX_FIELD_ERRORS = 100

/** One offending field: `series[3].values[2]` and what is wrong with it. */
export interface FieldError {
  readonly path: string
  readonly message: string
}

export interface ProblemBody {
  readonly type: string
  readonly title: string
  readonly status: number
  readonly detail?: string
  readonly errors?: readonly FieldError[]
}

export function problemTypeUri(slug: ProblemSlug): string {
  return PROBLEM_BASE_URI + slug
}

export function problemBody(slug: ProblemSlug, detail?: string, errors?: readonly FieldError[]): ProblemBody {
  const { status, title } = PROBLEM_TYPES[slug]
  return {
    type: problemTypeUri(slug),
    title,
    status,
    ...(detail === undefined ? {} : { detail }),
    ...(errors === undefined ? {} : { errors }),
  }
}

/** Thrown by handlers and plugins; the error handler turns it into a problem response. */
export class ProblemError extends Error {
  override readonly name = 'ProblemError'
  readonly statusCode: number
  constructor(
    readonly slug: ProblemSlug,
    readonly detail?: string,
    readonly errors?: readonly FieldError[],
    /** Extra response headers, e.g. `WWW-Authenticate` or `Retry-After`. */
    readonly headers: Readonly<Record<string, string>> = {},
    /**
     * dependsOnState: the same request could succeed once stored data changes
     * (e.g. a SKU without a stored history), so the answer is not kept for
     * Idempotency-Key replay.
     */
    readonly opts: { readonly dependsOnState?: boolean } = {},
  ) {
    super(detail ?? PROBLEM_TYPES[slug].title)
    this.statusCode = PROBLEM_TYPES[slug].status
  }

  toBody(): ProblemBody {
    return problemBody(this.slug, this.detail, this.errors)
  }
}

/**
 * Render a validation path the way a client writes it: `series[3].values[2]`.
 * Numeric segments become indexes; an empty path names the request part.
 */
export function formatFieldPath(path: readonly PropertyKey[], root: string): string {
  let out = ''
  for (const seg of path) {
    if (typeof seg === 'number') out += `[${seg}]`
    else out += out === '' ? String(seg) : `.${String(seg)}`
  }
  return out === '' ? root : out
}

/**
 * Zod issues as one entry per offending field. An unknown field of a strict object
 * is named by its own path (`series[2].values`), one entry per field.
 */
export function fieldIssues(
  issues: readonly $ZodIssue[],
): { readonly path: readonly PropertyKey[]; readonly message: string; readonly code: string }[] {
  return issues.flatMap((issue): { path: PropertyKey[]; message: string; code: string }[] =>
    issue.code === 'unrecognized_keys'
      ? issue.keys.map((key) => ({ path: [...issue.path, key], message: 'is not a field of this request', code: issue.code }))
      : [{ path: issue.path, message: issue.message, code: issue.code }],
  )
}
