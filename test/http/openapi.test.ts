import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { build } from '../../src/http/app.js'
import { renderOpenApiDocument } from '../../src/http/openapi-document.js'
import { renderClientTypes } from '../../scripts/client-types.js'
import { TITLE } from '../../src/http/plugins/swagger.js'
import { auth, InMemoryGatewayDouble, KEY_GARDEN, testConfig } from './gateway-double.js'

const committed = readFileSync(new URL('../../openapi/openapi.json', import.meta.url), 'utf8')

describe('OpenAPI document', () => {
  it('openapi/openapi.json matches the routes (run `npm run openapi` after changing a schema)', async () => {
    expect(await renderOpenApiDocument()).toBe(committed)
  })

  it('test/client/almanac-api.ts holds the client types generated from it (`npm run openapi`)', async () => {
    const types = readFileSync(new URL('../client/almanac-api.ts', import.meta.url), 'utf8')
    expect(await renderClientTypes(committed)).toBe(types)
  })

  it('documents every v1 route, problem responses and the cautions', () => {
    const doc = JSON.parse(committed)
    expect(Object.keys(doc.paths).sort()).toEqual([
      '/access',
      '/healthz',
      '/metrics',
      '/readyz',
      '/v1/accuracy/by-tag',
      '/v1/accuracy/exceptions',
      '/v1/accuracy/exceptions/{sku}/acknowledge',
      '/v1/accuracy/exceptions/{sku}/snooze',
      '/v1/callbacks',
      '/v1/callbacks/secret',
      '/v1/callbacks/{callbackId}',
      '/v1/closed-periods',
      '/v1/closed-periods/{frequency}',
      '/v1/forecast',
      '/v1/forecasts/published',
      '/v1/history',
      '/v1/runs',
      '/v1/runs/{runId}',
      '/v1/runs/{runId}/deliveries',
      '/v1/runs/{runId}/results',
      '/v1/schedules',
      '/v1/schedules/{scheduleId}',
      '/v1/skus',
      '/v1/skus/{sku}/accuracy',
      '/v1/skus/{sku}/accuracy/recompute',
      '/v1/skus/{sku}/adjustments',
      '/v1/skus/{sku}/adjustments/trail',
      '/v1/skus/{sku}/adjustments/{period}',
      '/v1/skus/{sku}/forecast',
      '/v1/skus/{sku}/history',
      '/v1/skus/{sku}/value-added',
      '/v1/tags',
      '/v1/value-added/by-tag',
      '/v1/worklist',
      '/v1/worklist/counts',
      '/v1/worklist/{sku}/acknowledge',
      '/v1/worklist/{sku}/snooze',
    ])
    expect(doc.paths['/v1/runs'].post.responses['202']).toBeDefined()
    expect(doc.paths['/v1/runs/{runId}'].delete.responses['404'].content['application/problem+json']).toBeDefined()
    expect(doc.info.description).toContain('not guarantees')
    expect(doc.info.description).toContain('before it drives an order')
    expect(doc.components.securitySchemes.apiKey).toEqual(expect.objectContaining({ type: 'http', scheme: 'bearer' }))
  })

  it("is served at /openapi.json and the interactive page at /docs, under Almanac's own title and mark", async () => {
    const app = await build({ config: testConfig(), gateway: new InMemoryGatewayDouble() })
    const json = await app.inject({ url: '/openapi.json' })
    const page = await app.inject({ url: '/docs/' })
    const script = await app.inject({ url: '/docs/static/swagger-initializer.js' })
    const icon = await app.inject({ url: '/docs/static/theme/favicon.svg' })
    await app.close()
    expect(json.statusCode).toBe(200)
    expect(json.json().openapi).toBe('3.1.0')
    expect(page.statusCode).toBe(200)
    expect(page.headers['content-type']).toMatch(/text\/html/)
    expect(page.body).toContain(`<title>${TITLE}</title>`)
    expect(page.body).toContain('favicon.svg')
    expect(page.body).not.toMatch(/favicon-(16|32)x/)
    // The page's script replaces the UI library's top-bar mark with ours.
    expect(script.statusCode).toBe(200)
    const logo = script.body.match(/data:image\/svg\+xml;base64,([A-Za-z0-9+/=]+)/)
    expect(Buffer.from(logo![1]!, 'base64').toString('utf8')).toContain('>Almanac</text>')
    expect(icon.statusCode).toBe(200)
  })
})

interface Operation {
  operationId?: string
  tags?: string[]
  responses: Record<string, { headers?: Record<string, unknown>; content?: Record<string, unknown> }>
  requestBody?: { content: Record<string, unknown> }
  parameters?: { name: string; in: string }[]
}

function operationsOf(doc: { paths: Record<string, Record<string, Operation>> }) {
  return Object.entries(doc.paths).flatMap(([path, item]) => Object.entries(item).map(([method, op]) => ({ path, method, op })))
}

describe('OpenAPI operations', () => {
  const doc = JSON.parse(committed)
  const ops = operationsOf(doc)

  it('have a unique operationId and one tag each, a tag of the document (the README groups)', () => {
    const ids = ops.map(({ op }) => op.operationId)
    expect(ids.every((id) => typeof id === 'string' && /^[a-z][A-Za-z]+$/.test(id))).toBe(true)
    expect(new Set(ids).size).toBe(ids.length)
    const tags = doc.tags.map((t: { name: string }) => t.name)
    for (const { op } of ops) {
      expect(op.tags).toHaveLength(1)
      expect(tags).toContain(op.tags![0])
    }
    // Every group has operations.
    expect(new Set(ops.map(({ op }) => op.tags![0]))).toEqual(new Set(tags))
    // The README's API table lists the same groups, in the same order.
    const readme = readFileSync(new URL('../../README.md', import.meta.url), 'utf8')
    const api = readme.slice(readme.indexOf('\n## API\n'), readme.indexOf('\n## Configuration\n'))
    const groups = [...api.matchAll(/^\| ([a-z]+) \| `/gm)].map((m) => m[1])
    expect(groups).toEqual(tags)
  })

  it('declare Location on 201 and 202, Retry-After on 429 and 503', () => {
    for (const { op } of ops) {
      for (const [status, response] of Object.entries(op.responses)) {
        if (status === '201' || status === '202') expect(response.headers).toHaveProperty('Location')
        if (status === '429' || status === '503') expect(response.headers).toHaveProperty('Retry-After')
      }
    }
    expect(doc.paths['/v1/skus/{sku}/history'].put.responses['201'].headers).toHaveProperty('Location')
  })

  it('declare each media type: the history upload per type, CSV results', () => {
    const upload = doc.paths['/v1/history'].post.requestBody.content
    expect(Object.keys(upload).sort()).toEqual(['application/json', 'application/ndjson', 'application/x-ndjson', 'text/csv'])
    expect(upload['application/json'].schema.properties.series.items.properties).toHaveProperty('firstPeriod')
    expect(Object.keys(doc.paths['/v1/runs/{runId}/results'].get.responses['200'].content).sort()).toEqual(['application/json', 'text/csv'])
    expect(Object.keys(doc.paths['/v1/forecasts/published'].get.responses['200'].content).sort()).toEqual(['application/x-ndjson', 'text/csv'])
    expect(Object.keys(doc.paths['/v1/schedules/{scheduleId}'].patch.requestBody.content).sort()).toEqual(['application/json', 'application/merge-patch+json'])
  })

  it('list only the problems a route can give: no body problems without a body, no 404 on lists', () => {
    for (const { path, method, op } of ops) {
      const statuses = Object.keys(op.responses)
      if (method === 'get') expect(statuses, `${method} ${path}`).not.toContain('413')
      if (method === 'get') expect(statuses, `${method} ${path}`).not.toContain('415')
      if (!path.includes('{')) expect(statuses, `${method} ${path}`).not.toContain('404')
      if (path.startsWith('/v1/')) expect(statuses, `${method} ${path}`).toContain('401')
      // /metrics answers 401 when the server has a metrics token (METRICS_TOKEN).
      else if (path !== '/metrics') expect(statuses, `${method} ${path}`).not.toContain('401')
    }
    // The synchronous forecast needs no store, so it is never 503.
    expect(Object.keys(doc.paths['/v1/forecast'].post.responses)).not.toContain('503')
  })

  it('answer with documented statuses only: unauthenticated, malformed, wrong media type, unknown ids', async () => {
    const app = await build({ config: testConfig(), gateway: new InMemoryGatewayDouble() })
    const undocumented: string[] = []
    const seen = new Set<number>()
    try {
      for (const { path, method, op } of ops) {
        const url = path.replace(/\{[^}]+\}/g, 'no-such-id')
        const hasBody = op.requestBody !== undefined || method === 'post' || method === 'put' || method === 'delete'
        const probes = [
          { name: 'no key', headers: {} as Record<string, string>, payload: undefined as string | undefined },
          { name: 'plain', headers: auth(KEY_GARDEN), payload: undefined },
          { name: 'bad query', headers: auth(KEY_GARDEN), payload: undefined, query: '?limit=0&cursor=%25%25&view=none' },
          ...(hasBody
            ? [
                { name: 'malformed JSON', headers: { ...auth(KEY_GARDEN), 'content-type': 'application/json' }, payload: '{"x":' },
                { name: 'media type', headers: { ...auth(KEY_GARDEN), 'content-type': 'text/plain' }, payload: 'hello' },
                { name: 'unknown field', headers: { ...auth(KEY_GARDEN), 'content-type': 'application/json' }, payload: '{"notAField":1}' },
              ]
            : []),
        ]
        for (const probe of probes) {
          const res = await app.inject({
            method: method.toUpperCase() as 'GET',
            url: url + ('query' in probe ? probe.query : ''),
            headers: probe.headers,
            ...(probe.payload === undefined ? {} : { payload: probe.payload }),
          })
          seen.add(res.statusCode)
          if (res.statusCode >= 400 && !(String(res.statusCode) in op.responses)) {
            undocumented.push(`${method.toUpperCase()} ${path} (${probe.name}): ${res.statusCode} ${res.body.slice(0, 120)}`)
          }
        }
      }
    } finally {
      await app.close()
    }
    expect(undocumented).toEqual([])
    // The probes reach each kind of answer (the stores are absent from this app, hence 503).
    for (const status of [400, 401, 404, 415, 503]) expect(seen).toContain(status)
  })
})
