import type { ProblemSlug } from '../../errors.js'

/**
 * The problems a route can answer with, by kind of route. A route lists its
 * own as `'x-problems'` in its schema; the OpenAPI document is built from that
 * list (openapi-transform.ts), one error response per status with the titles
 * of exactly these problems, so the document shows what the route can return
 * and nothing more. The handlers themselves throw ProblemError.
 */

/** Any route: a URL fastify cannot read, a fault on our side. */
const ANY = ['bad-request', 'internal'] as const

/** Authenticated /v1 routes: a missing or unknown key, the tenant's request budget, a path or query that breaks the schema. */
const AUTHENTICATED = [...ANY, 'validation-failed', 'unauthorized', 'rate-limited'] as const

/** A route that needs Redis answers 503 while it is unreachable (or the feature's store is not configured). */
const STORE = ['not-ready'] as const

/** A route that parses a body: malformed JSON, a body above the limit, a media type it does not take. */
const BODY = ['malformed-json', 'payload-too-large', 'unsupported-media-type'] as const

/** Reads of stored data. */
export const READ: readonly ProblemSlug[] = [...AUTHENTICATED, ...STORE]
/** Reads of one stored resource by id. */
export const READ_ONE: readonly ProblemSlug[] = [...READ, 'not-found']
/** Writes with a body (POST, PUT, and DELETE, which fastify parses a body for too). */
export const WRITE: readonly ProblemSlug[] = [...READ, ...BODY]
/** Writes of one stored resource by id. */
export const WRITE_ONE: readonly ProblemSlug[] = [...WRITE, 'not-found']
/** Routes that honour Idempotency-Key. */
export const IDEMPOTENT: readonly ProblemSlug[] = ['idempotency-key-in-use', 'idempotency-key-reused']
/** POST /v1/forecast: no store involved (rate limits let requests through while Redis is away). */
export const SYNC_FORECAST: readonly ProblemSlug[] = [...AUTHENTICATED, ...BODY, 'too-many-series', 'fit-cost-too-high']
