import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { build } from '../../src/http/app.js'
import { renderOpenApiDocument } from '../../src/http/openapi-document.js'
import { InMemoryGatewayDouble, testConfig } from './gateway-double.js'

const committed = readFileSync(new URL('../../openapi/openapi.json', import.meta.url), 'utf8')

describe('OpenAPI document', () => {
  it('openapi/openapi.json matches the routes (run `npm run openapi` after changing a schema)', async () => {
    expect(await renderOpenApiDocument()).toBe(committed)
  })

  it('documents every v1 route, problem responses and the cautions', () => {
    const doc = JSON.parse(committed)
    expect(Object.keys(doc.paths).sort()).toEqual([
      '/healthz',
      '/readyz',
      '/v1/accuracy/exceptions',
      '/v1/callbacks',
      '/v1/callbacks/secret',
      '/v1/callbacks/{callbackId}',
      '/v1/forecast',
      '/v1/history',
      '/v1/runs',
      '/v1/runs/{runId}',
      '/v1/runs/{runId}/deliveries',
      '/v1/runs/{runId}/results',
      '/v1/schedules',
      '/v1/schedules/{scheduleId}',
      '/v1/skus',
      '/v1/skus/{sku}/accuracy',
      '/v1/skus/{sku}/forecast',
      '/v1/skus/{sku}/history',
    ])
    expect(doc.paths['/v1/runs'].post.responses['202']).toBeDefined()
    expect(doc.paths['/v1/runs/{runId}'].delete.responses['404'].content['application/problem+json']).toBeDefined()
    expect(doc.info.description).toContain('not guarantees')
    expect(doc.info.description).toContain('before it drives an order')
    expect(doc.components.securitySchemes.apiKey).toEqual(expect.objectContaining({ type: 'http', scheme: 'bearer' }))
  })

  it('is served at /openapi.json and the interactive page at /docs', async () => {
    const app = await build({ config: testConfig(), gateway: new InMemoryGatewayDouble() })
    const json = await app.inject({ url: '/openapi.json' })
    const page = await app.inject({ url: '/docs/' })
    await app.close()
    expect(json.statusCode).toBe(200)
    expect(json.json().openapi).toBe('3.1.0')
    expect(page.statusCode).toBe(200)
    expect(page.headers['content-type']).toMatch(/text\/html/)
  })
})
