import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { gunzipSync } from 'node:zlib'
import { join } from 'node:path'
import type { FastifyInstance } from 'fastify'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { build } from '../../../src/http/app.js'
import { defaultWorkbenchRoot } from '../../../src/http/plugins/workbench.js'
import { InMemoryGatewayDouble, KEY_GARDEN, auth, testConfig } from '../gateway-double.js'

const BIG_SCRIPT = Array.from({ length: 400 }, (_, i) => `export const row${i} = 'garden hose ${i}'`).join('\n')

// A stand-in build output: the plugin serves whatever vite wrote; the pages themselves are tested in a browser (test/web).
let root: string
let app: FastifyInstance
let unbuilt: FastifyInstance
let open: FastifyInstance

beforeAll(async () => {
  root = mkdtempSync(join(tmpdir(), 'almanac-workbench-'))
  mkdirSync(join(root, 'assets'))
  writeFileSync(join(root, 'index.html'), '<!doctype html><title>workbench</title>')
  writeFileSync(join(root, 'assets', 'main-1a2b3c.js'), 'console.log(1)')
  writeFileSync(join(root, 'assets', 'big-4d5e6f.js'), BIG_SCRIPT)
  writeFileSync(join(tmpdir(), 'almanac-workbench-outside.txt'), 'not served')
  app = await build({ config: testConfig({ rateLimitMax: 2 }), gateway: new InMemoryGatewayDouble(), workbenchRoot: root })
  unbuilt = await build({ config: testConfig(), gateway: new InMemoryGatewayDouble(), workbenchRoot: join(root, 'missing') })
  open = await build({ config: testConfig({ apiKeys: new Map() }), gateway: new InMemoryGatewayDouble() })
})

afterAll(async () => {
  await app?.close()
  await unbuilt?.close()
  await open?.close()
  rmSync(root, { recursive: true, force: true })
})

describe('workbench at /app/', () => {
  it('answers index.html for page paths (deep links), without an API key and with a content security policy', async () => {
    for (const url of ['/app/', '/app/skus/GRD-1001', '/app/skus/a%2Fb', '/app/runs/abc?x=1', '/app/upload']) {
      const res = await app.inject({ url })
      expect(res.statusCode, url).toBe(200)
      expect(res.headers['content-type']).toMatch(/^text\/html/)
      expect(res.body).toBe('<!doctype html><title>workbench</title>')
      expect(res.headers['cache-control']).toBe('no-cache')
      expect(res.headers['content-security-policy']).toContain("script-src 'self'")
    }
    const bare = await app.inject({ url: '/app' })
    expect(bare.statusCode).toBe(301)
    expect(bare.headers.location).toBe('/app/')
  })

  it('serves built assets with a year of caching; a missing asset is a 404 problem, not the page', async () => {
    const js = await app.inject({ url: '/app/assets/main-1a2b3c.js' })
    expect(js.statusCode).toBe(200)
    expect(js.headers['content-type']).toMatch(/javascript/)
    expect(js.headers['cache-control']).toBe('public, max-age=31536000, immutable')
    const missing = await app.inject({ url: '/app/assets/gone-000.js' })
    expect(missing.statusCode).toBe(404)
    expect(missing.headers['content-type']).toMatch(/^application\/problem\+json/)
  })

  it('never serves a file outside its folder', async () => {
    for (const url of ['/app/..%2Falmanac-workbench-outside.txt', '/app/%2e%2e/almanac-workbench-outside.txt', '/app/assets/..%2F..%2Fetc%2Fpasswd']) {
      const res = await app.inject({ url })
      expect(res.body, url).not.toContain('not served')
      expect(res.body, url).not.toContain('root:')
    }
  })

  it('does not count page and asset requests against the rate limit (2 per window here)', async () => {
    for (let i = 0; i < 5; i++) expect((await app.inject({ url: '/app/assets/main-1a2b3c.js' })).statusCode).toBe(200)
    for (let i = 0; i < 5; i++) expect((await app.inject({ url: '/app/skus' })).statusCode).toBe(200)
    for (let i = 0; i < 5; i++) expect((await app.inject({ url: '/access' })).statusCode).toBe(200)
  })

  it('answers 503 naming the build command when the pages were not built', async () => {
    const res = await unbuilt.inject({ url: '/app/skus' })
    expect(res.statusCode).toBe(503)
    expect(res.json().detail).toBe('The workbench is not built on this server: run npm run build')
    expect((await open.inject({ url: '/app/' })).statusCode).toBe(503)
  })

  it('finds dist/web under the package root from any file below it', () => {
    const here = new URL(import.meta.url).pathname
    expect(defaultWorkbenchRoot(here)).toMatch(/[/\\]dist[/\\]web$/)
    expect(defaultWorkbenchRoot('/')).toBeNull()
  })
})

describe('GET /access', () => {
  it('tells the page whether a key is needed, without a key', async () => {
    const withKeys = await app.inject({ url: '/access' })
    expect(withKeys.statusCode).toBe(200)
    expect(withKeys.json()).toEqual({ apiKeyRequired: true })
    expect((await open.inject({ url: '/access' })).json()).toEqual({ apiKeyRequired: false })
    // The key check itself is unchanged: other routes still need one.
    expect((await app.inject({ url: '/v1/skus' })).statusCode).toBe(401)
    expect((await app.inject({ url: '/access', headers: auth(KEY_GARDEN) })).statusCode).toBe(200)
  })
})

describe('workbench files and gzip', () => {
  it('sends a large asset gzip-compressed to a client that accepts it, a small one as it is, and never counts them', async () => {
    // Budget 2 for this app: more than two files would be refused if they counted.
    for (let i = 0; i < 3; i++) {
      const big = await app.inject({ url: '/app/assets/big-4d5e6f.js', headers: { 'accept-encoding': 'gzip' } })
      expect(big.statusCode).toBe(200)
      expect(big.headers['content-encoding']).toBe('gzip')
      expect(big.headers.vary).toMatch(/accept-encoding/i)
      expect(gunzipSync(big.rawPayload).toString('utf8')).toBe(BIG_SCRIPT)
    }
    const small = await app.inject({ url: '/app/assets/main-1a2b3c.js', headers: { 'accept-encoding': 'gzip' } })
    expect(small.statusCode).toBe(200)
    expect(small.headers['content-encoding']).toBeUndefined()
    expect(small.body).toBe('console.log(1)')
  })
})

