import type { jsonSchemaTransformObject } from 'fastify-type-provider-zod'
import { PROBLEM_CONTENT_TYPE, PROBLEM_TYPES, type ProblemSlug } from '../errors.js'

// Last touches on the generated OpenAPI document: each operation's error responses
// are made from the problems its route lists (`x-problems`), success responses get
// their descriptions and headers, routes add media types the schemas cannot express
// (`x-requestBodies`, `x-responseMediaTypes`), and unreferenced component schemas go.

type OpenApiDoc = ReturnType<typeof jsonSchemaTransformObject>
interface OpenApiResponse {
  description?: string
  content?: Record<string, unknown>
  headers?: Record<string, unknown>
}
interface OpenApiOperation {
  operationId?: string
  parameters?: Record<string, unknown>[]
  responses?: Record<string, OpenApiResponse>
  requestBody?: { required: boolean; content: Record<string, unknown> }
  'x-problems'?: readonly ProblemSlug[]
  'x-requestBodies'?: Record<string, unknown>
  'x-responseMediaTypes'?: Record<string, Record<string, unknown>>
  /** The route has `config.etag` (plugins/etag.ts): ETag on 200, If-None-Match, 304. */
  'x-etag'?: boolean
}

const header = (description: string, type: 'string' | 'integer' = 'string') => ({
  description,
  schema: type === 'integer' ? { type, minimum: 0 } : { type },
})

/** Response headers clients rely on, by status. */
const STATUS_HEADERS: Record<string, Record<string, unknown>> = {
  '201': { Location: header('URL of the resource created') },
  '202': { Location: header('URL of the run: /v1/runs/{runId}') },
  '401': { 'WWW-Authenticate': header('Bearer') },
  '429': { 'Retry-After': header('Seconds until the tenant may send again', 'integer') },
  '503': { 'Retry-After': header('Seconds to wait before retrying, when Redis is unreachable', 'integer') },
}

const STATUS_DESCRIPTIONS: Record<string, string> = {
  '200': 'OK',
  '201': 'Created',
  '202': 'Accepted; poll the run at the Location header',
  '204': 'No content',
}

function operations(doc: OpenApiDoc): OpenApiOperation[] {
  const paths = (doc as { paths?: Record<string, Record<string, OpenApiOperation>> }).paths
  return Object.values(paths ?? {}).flatMap((item) => Object.values(item))
}

/**
 * Conditional reads (`x-etag`), Idempotency-Key (routes whose problems include its two) and
 * Content-Encoding (routes that take a body), as parameters and headers.
 */
export function protocolHeaders(doc: OpenApiDoc): OpenApiDoc {
  for (const op of operations(doc)) {
    const responses = (op.responses ??= {})
    const success = Object.keys(responses).filter((s) => s.startsWith('2'))
    if (op['x-etag']) {
      op.parameters = [
        ...(op.parameters ?? []),
        { in: 'header', name: 'If-None-Match', required: false, description: 'ETag of a copy you hold: 304 when unchanged', schema: { type: 'string' } },
      ]
      for (const s of success) responses[s]!.headers = { ...responses[s]!.headers, ETag: header('Tag of this answer\'s body: strong, or its weak form W/"..." when the answer is gzip-compressed') }
      responses['304'] = { description: 'Not modified: If-None-Match matches the current ETag (no body)', headers: { ETag: header('The current tag') } }
    }
    if (op['x-problems']?.includes('idempotency-key-in-use')) {
      op.parameters = [
        ...(op.parameters ?? []),
        {
          in: 'header',
          name: 'Idempotency-Key',
          required: false,
          description:
            'Any 1-255 visible ASCII characters. The same key with the same request answers the first answer again ' +
            '(with Almanac-Reused-Answer: true); with another request it is a 422; while the first is in flight a 409',
          schema: { type: 'string', minLength: 1, maxLength: 255 },
        },
      ]
      for (const s of success) {
        responses[s]!.headers = { ...responses[s]!.headers, 'Almanac-Reused-Answer': header('true when this is the stored answer to an earlier request with the same Idempotency-Key') }
      }
    }
    if (op.requestBody !== undefined || op['x-requestBodies'] !== undefined) {
      op.parameters = [
        ...(op.parameters ?? []),
        {
          in: 'header',
          name: 'Content-Encoding',
          required: false,
          description:
            'gzip: the body is gzip-compressed; it is decompressed as it arrives and the body limit counts the ' +
            'decompressed bytes (413 past it). Corrupt gzip is a 400, any other coding a 415',
          schema: { type: 'string', enum: ['gzip', 'x-gzip', 'identity'] },
        },
      ]
    }
    delete op['x-etag']
  }
  return doc
}

/** Error responses from `x-problems`: one per status, titled by exactly the route's problems. */
export function problemResponses(doc: OpenApiDoc): OpenApiDoc {
  for (const op of operations(doc)) {
    const responses = (op.responses ??= {})
    for (const status of Object.keys(responses)) if (Number(status) >= 400) delete responses[status]
    const byStatus = new Map<number, string[]>()
    for (const slug of op['x-problems'] ?? []) {
      const { status, title } = PROBLEM_TYPES[slug]
      byStatus.set(status, [...(byStatus.get(status) ?? []), `${title} (${slug})`])
    }
    for (const [status, titles] of [...byStatus].sort((a, b) => a[0] - b[0])) {
      responses[String(status)] = {
        description: titles.join('; '),
        content: { [PROBLEM_CONTENT_TYPE]: { schema: { $ref: '#/components/schemas/Problem' } } },
      }
    }
    delete op['x-problems']
  }
  return doc
}

/** Success descriptions, the headers of every status, and media types the routes add. */
export function responseDetails(doc: OpenApiDoc): OpenApiDoc {
  for (const op of operations(doc)) {
    for (const [status, response] of Object.entries(op.responses ?? {})) {
      if (STATUS_HEADERS[status]) response.headers = { ...response.headers, ...STATUS_HEADERS[status] }
      if (STATUS_DESCRIPTIONS[status] && response.description === 'Default Response') response.description = STATUS_DESCRIPTIONS[status]
      const extra = op['x-responseMediaTypes']?.[status]
      if (extra) response.content = { ...response.content, ...extra }
    }
    const bodies = op['x-requestBodies']
    if (bodies) op.requestBody = { required: true, content: { ...op.requestBody?.content, ...bodies } }
    delete op['x-responseMediaTypes']
    delete op['x-requestBodies']
  }
  return doc
}

/**
 * Keep only referenced component schemas (the zod registry yields an input and
 * an output variant of each) and drop their `$schema`/`$id` keys.
 */
export function pruneComponents(doc: OpenApiDoc): OpenApiDoc {
  const schemas = (doc as { components?: { schemas?: Record<string, Record<string, unknown>> } }).components?.schemas
  if (!schemas) return doc
  const used = new Set<string>()
  const collect = (v: unknown) => {
    for (const m of JSON.stringify(v).matchAll(/"#\/components\/schemas\/([^"]+)"/g)) used.add(m[1]!)
  }
  collect((doc as { paths?: unknown }).paths)
  // Components may reference each other; repeat until nothing new appears.
  for (let size = -1; size !== used.size; ) {
    size = used.size
    for (const name of [...used]) collect(schemas[name])
  }
  for (const name of Object.keys(schemas)) {
    if (!used.has(name)) delete schemas[name]
    else {
      delete schemas[name]!.$schema
      delete schemas[name]!.$id
    }
  }
  return doc
}

export function finishDocument(doc: OpenApiDoc): OpenApiDoc {
  return pruneComponents(responseDetails(problemResponses(protocolHeaders(doc))))
}
