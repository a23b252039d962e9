import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Redis } from 'ioredis'
import { KEY_GARDEN, auth, testConfig } from './gateway-double.js'
import { buildHostileApp, type HostileApp } from './hostile-helpers.js'
import { LARGE_JSON_BYTES } from '../../src/http/body-threads/pool.js'
import { RunStore, runStoreOptions } from '../../src/storage/runs/run-store.js'

/**
 * Issue 14 finding 1: a run body of LARGE_JSON_BYTES or more is parsed, validated and cut
 * into chunk inputs on a thread, not on the event loop. Every answer must be the one the
 * body gets on the event loop: the same run, the same problems. Invented demand.
 */

let h: HostileApp
let redis: Redis
beforeAll(async () => {
  h = await buildHostileApp('large-run-body', { chunkSize: 500, bodyLimitBytes: 64 * 1024 * 1024 })
  redis = new Redis(h.url)
})
afterAll(async () => {
  redis?.disconnect()
  await h?.close()
})

const series = (n: number, demand: (i: number) => unknown[] = (i) => Array.from({ length: 36 }, (_, t) => 100 + ((i * 7 + t * 13) % 50))) =>
  Array.from({ length: n }, (_, i) => ({ sku: `RAKE-${String(i).padStart(6, '0')}`, demand: demand(i) }))
const post = (payload: string, headers: Record<string, string> = {}) =>
  h.app.inject({ method: 'POST', url: '/v1/runs', headers: { ...auth(KEY_GARDEN), 'content-type': 'application/json', ...headers }, payload })

describe('large run bodies', () => {
  it('queues a valid inline body through the thread: the chunk inputs hold exactly the series sent', async () => {
    const sent = series(6_000)
    const text = JSON.stringify({ horizon: 6, series: sent })
    expect(text.length).toBeGreaterThan(LARGE_JSON_BYTES)
    const res = await post(text)
    expect(res.statusCode).toBe(202)
    const run = res.json()
    expect(run).toMatchObject({ status: 'queued', progress: { total: 6_000, done: 0 }, origin: { kind: 'inline' } })
    expect(run.settings).toMatchObject({ horizon: 6, publish: false })
    const store = new RunStore(redis, runStoreOptions(testConfig({ redisUrl: h.url, redisPrefix: h.prefix })))
    expect(await store.chunkCount('garden', run.id)).toBe(12)
    const back = []
    for (let c = 0; c < 12; c++) back.push(...((await store.readChunkInput('garden', run.id, c)) ?? []))
    expect(back).toEqual(sent)
  })

  it('answers an invalid large body with the problems a small body of the same kind gets', async () => {
    const bad = (n: number) => JSON.stringify({ horizon: 6, series: series(n, () => Array.from({ length: 24 }, () => 'x')) })
    const small = bad(300)
    const large = bad(20_000)
    expect(small.length).toBeLessThan(LARGE_JSON_BYTES)
    expect(large.length).toBeGreaterThan(LARGE_JSON_BYTES)
    const [a, b] = [await post(small), await post(large)]
    expect(a.statusCode).toBe(400)
    expect(b.statusCode).toBe(400)
    expect(b.json()).toEqual(a.json())
    expect(b.json().errors).toHaveLength(100)
    expect(b.json().errors[0].path).toBe('series[0].demand[0]')
  })

  it('answers malformed JSON, a duplicate SKU and a refused option as on the event loop', async () => {
    const pad = 'x'.repeat(LARGE_JSON_BYTES)
    const malformed = await post(`{"horizon": 6, "note": "${pad}", "series": [`)
    expect(malformed.statusCode).toBe(400)
    expect(malformed.json()).toMatchObject({ type: 'https://almanac.example/problems/malformed-json' })

    const dup = series(6_000)
    dup[5_000] = { ...dup[5_000]!, sku: dup[10]!.sku }
    const dupLarge = await post(JSON.stringify({ horizon: 6, series: dup }))
    const dupSmall = await post(JSON.stringify({ horizon: 6, series: [...dup.slice(0, 11), dup[5_000]] }))
    expect(dupLarge.statusCode).toBe(400)
    expect(dupLarge.json().errors.map((e: { path: string }) => e.path)).toEqual(['series[5000].sku'])
    expect(dupSmall.json().errors.map((e: { path: string }) => e.path)).toEqual(['series[11].sku'])
    expect(dupLarge.json().errors[0].message).toBe(dupSmall.json().errors[0].message)

    // A body that would set an object's prototype is refused either way.
    const poisonSmall = await post('{"horizon": 6, "__proto__": {"admin": true}, "series": []}')
    const poisonLarge = await post(`{"horizon": 6, "note": "${pad}", "__proto__": {"admin": true}, "series": []}`)
    expect(poisonSmall.statusCode).toBe(400)
    expect(poisonLarge.json()).toEqual(poisonSmall.json())

    // Inline series cannot take openPeriods (stored histories only): the gateway's check, on the thread.
    const opts = await post(JSON.stringify({ horizon: 6, openPeriods: 'include', series: series(6_000) }))
    const optsSmall = await post(JSON.stringify({ horizon: 6, openPeriods: 'include', series: series(3) }))
    expect(opts.statusCode).toBe(400)
    expect(opts.json()).toEqual(optsSmall.json())
  })

  it('replays a large body by Idempotency-Key, and refuses the key with another body', async () => {
    const text = JSON.stringify({ horizon: 3, series: series(6_000) })
    const first = await post(text, { 'idempotency-key': 'large-body-1' })
    const again = await post(text, { 'idempotency-key': 'large-body-1' })
    expect(first.statusCode).toBe(202)
    expect(again.statusCode).toBe(202)
    expect(again.headers['almanac-reused-answer']).toBe('true')
    expect(again.json().id).toBe(first.json().id)
    const other = await post(JSON.stringify({ horizon: 4, series: series(6_000) }), { 'idempotency-key': 'large-body-1' })
    expect(other.statusCode).toBe(422)
  })

  it('takes a large stored-histories body (scope.skus) to the scope path: unknown SKUs listed', async () => {
    const skus = Array.from({ length: 70_000 }, (_, i) => `SHEAR-${String(i).padStart(8, '0')}`)
    const text = JSON.stringify({ horizon: 6, scope: { skus } })
    expect(text.length).toBeGreaterThan(LARGE_JSON_BYTES)
    const res = await post(text)
    expect(res.statusCode).toBe(400)
    expect(res.json().errors[0]).toEqual({ path: 'scope.skus[0]', message: 'no stored history for SKU "SHEAR-00000000"' })
  })
})
