import type { jsonSchemaTransformObject } from 'fastify-type-provider-zod'
import { PROBLEM_CONTENT_TYPE, PROBLEM_TYPES } from '../errors.js'

// Last touches on the generated OpenAPI document: problem responses get their
// media type, descriptions and headers; unreferenced component schemas go.

type OpenApiDoc = ReturnType<typeof jsonSchemaTransformObject>
interface OpenApiResponse {
  description?: string
  content?: Record<string, unknown>
  headers?: Record<string, unknown>
}

const header = (description: string, type: 'string' | 'integer' = 'string') => ({ description, schema: { type } })

/** Response headers clients rely on, by status. */
const STATUS_HEADERS: Record<string, Record<string, unknown>> = {
  '202': { Location: header('URL of the run: /v1/runs/{runId}') },
  '401': { 'WWW-Authenticate': header('Bearer') },
  '429': { 'Retry-After': header('Seconds until the tenant may send again', 'integer') },
}

const STATUS_DESCRIPTIONS: Record<string, string> = {
  '200': 'OK',
  '202': 'Accepted; poll the run at the Location header',
}

/** Error responses are problem details: say so in the document; describe each status and its headers. */
export function problemContentType(doc: OpenApiDoc): OpenApiDoc {
  const paths = (doc as { paths?: Record<string, Record<string, { responses?: Record<string, OpenApiResponse> }>> }).paths
  for (const item of Object.values(paths ?? {})) {
    for (const op of Object.values(item)) {
      for (const [status, response] of Object.entries(op.responses ?? {})) {
        if (STATUS_HEADERS[status]) response.headers = { ...response.headers, ...STATUS_HEADERS[status] }
        if (Number(status) >= 400 && response.content?.['application/json']) {
          response.content = { [PROBLEM_CONTENT_TYPE]: response.content['application/json'] }
          const titles = Object.values(PROBLEM_TYPES)
            .filter((p) => String(p.status) === status)
            .map((p) => p.title)
          response.description = titles.join(' / ')
        } else if (STATUS_DESCRIPTIONS[status] && response.description === 'Default Response') {
          response.description = STATUS_DESCRIPTIONS[status]
        }
      }
    }
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
    for (const m of JSON.stringify(v).matchAll(/"#\/components\/schemas\/([^"]+)"/g)) used.add(m[1])
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
      delete schemas[name].$schema
      delete schemas[name].$id
    }
  }
  return doc
}


export function finishDocument(doc: OpenApiDoc): OpenApiDoc {
  return pruneComponents(problemContentType(doc))
}
