import { afterEach, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import { build } from '../../../src/http/app.js'
import { loadConfig } from '../../../src/config.js'
import { InMemoryGatewayDouble, KEY_GARDEN, auth, sha256, testConfig } from '../gateway-double.js'

// Issue 14, finding 17: /metrics ran Redis queries on every scrape, with no auth and no rate limit.
describe('GET /metrics: cached figures and an optional token', () => {
  let app: FastifyInstance | undefined
  afterEach(async () => {
    await app?.close()
    app = undefined
  })

  it('reads the Redis figures once for many scrapes, also concurrent ones (seen failing before the fix: 20 reads)', async () => {
    const gateway = new InMemoryGatewayDouble()
    app = await build({ config: testConfig({ metricsCacheMs: 60_000 }), gateway })
    for (let i = 0; i < 10; i++) expect((await app.inject({ url: '/metrics' })).statusCode).toBe(200)
    const together = await Promise.all(Array.from({ length: 10 }, () => app!.inject({ url: '/metrics' })))
    expect(together.every((r) => r.statusCode === 200 && r.body.includes('almanac_queue_jobs{state="waiting"} 3'))).toBe(true)
    expect(gateway.statsCalls).toBe(1)
  })

  it('reads them again once the cache time has passed (0: every scrape)', async () => {
    const gateway = new InMemoryGatewayDouble()
    app = await build({ config: testConfig({ metricsCacheMs: 0 }), gateway })
    await app.inject({ url: '/metrics' })
    await app.inject({ url: '/metrics' })
    expect(gateway.statsCalls).toBe(2)
  })

  it('with a metrics token, refuses scrapes without it (seen failing before the fix: 200)', async () => {
    const token = 'scrape-token-0123456789'
    app = await build({ config: testConfig({ metricsToken: token }), gateway: new InMemoryGatewayDouble() })
    const none = await app.inject({ url: '/metrics' })
    expect(none.statusCode).toBe(401)
    expect(none.headers['www-authenticate']).toBe('Bearer realm="almanac-metrics"')
    expect(none.json().detail).toBe('GET /metrics needs the metrics token as Authorization: Bearer <token>')
    // A tenant's API key is not the metrics token.
    expect((await app.inject({ url: '/metrics', headers: auth(KEY_GARDEN) })).statusCode).toBe(401)
    const ok = await app.inject({ url: '/metrics', headers: { authorization: `Bearer ${token}` } })
    expect(ok.statusCode).toBe(200)
    expect(ok.body).toContain('almanac_queue_jobs')
  })

  it('reads METRICS_TOKEN and METRICS_CACHE_MS from the environment, refusing a short token', () => {
    const deps = { readFile: () => '', hash: sha256 }
    const c = loadConfig({ METRICS_TOKEN: 'scrape-token-0123456789', METRICS_CACHE_MS: '2000' }, deps)
    expect(c.metricsToken).toBe('scrape-token-0123456789')
    expect(c.metricsCacheMs).toBe(2000)
    expect(loadConfig({}, deps).metricsCacheMs).toBe(5000)
    expect(() => loadConfig({ METRICS_TOKEN: 'short' }, deps)).toThrow(/METRICS_TOKEN/)
  })
})
