import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import fc from 'fast-check'
import { KEY_GARDEN, auth } from './gateway-double.js'
import { buildHostileApp, expectWellFormed, injectWithin, type HostileApp } from './hostile-helpers.js'

/**
 * Hostile path parameters and query strings at every route, through the real
 * app over real Redis stores: a 2xx or a 4xx problem+json, nothing else.
 */

let h: HostileApp

beforeAll(async () => {
  h = await buildHostileApp('hostile-paths', { rateLimitMax: 1_000_000 })
})

afterAll(async () => {
  await h?.close()
})

const ROUTES: { method: 'GET' | 'DELETE' | 'POST' | 'PUT'; path: (p: string) => string; query?: readonly string[] }[] = [
  { method: 'GET', path: (p) => `/v1/runs/${p}` },
  { method: 'DELETE', path: (p) => `/v1/runs/${p}` },
  { method: 'GET', path: (p) => `/v1/runs/${p}/results`, query: ['limit', 'cursor', 'sku'] },
  { method: 'GET', path: (p) => `/v1/runs/${p}/deliveries` },
  { method: 'GET', path: (p) => `/v1/skus/${p}/forecast` },
  { method: 'GET', path: (p) => `/v1/skus/${p}/history` },
  { method: 'GET', path: (p) => `/v1/skus/${p}/accuracy` },
  { method: 'GET', path: () => '/v1/skus', query: ['limit', 'cursor', 'tag', 'prefix'] },
  { method: 'GET', path: () => '/v1/accuracy/exceptions', query: ['limit', 'cursor', 'threshold'] },
  { method: 'GET', path: () => '/v1/callbacks' },
  { method: 'DELETE', path: (p) => `/v1/callbacks/${p}` },
  { method: 'POST', path: (p) => `/v1/callbacks/${p}/secret` },
  { method: 'GET', path: () => '/v1/schedules', query: ['limit', 'cursor'] },
  { method: 'GET', path: (p) => `/v1/schedules/${p}` },
  { method: 'DELETE', path: (p) => `/v1/schedules/${p}` },
  { method: 'POST', path: () => '/v1/history', query: ['mode', 'frequency', 'duplicates', 'skuColumn'] },
]

const hostileText = fc.oneof(
  fc.constantFrom(
    '',
    '..',
    '../../etc/passwd',
    '%',
    '%zz',
    '%00',
    '%2F',
    '__proto__',
    'constructor',
    'prototype',
    'NaN',
    'Infinity',
    '-1',
    '1e308',
    '0x10',
    'x'.repeat(10_240),
    '\ud800',
    '\u202eRTL',
    '👩‍👩‍👧‍👦',
    'a b',
    'a?b#c',
  ),
  fc.string({ unit: 'binary', maxLength: 40 }),
  fc.string({ maxLength: 300 }),
)

/** Percent-encodes like a client would, except for a raw variant that keeps some characters as sent. */
const encode = (s: string, raw: boolean) => {
  if (raw) return s.replace(/[\s#?/]/g, (c) => encodeURIComponent(c))
  try {
    return encodeURIComponent(s)
  } catch {
    return encodeURIComponent(s.replace(/[\ud800-\udfff]/g, '\ufffd')) // lone surrogates cannot be encoded
  }
}

describe('hostile path parameters and query strings', () => {
  it('every route answers a 2xx or a 4xx problem', async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.constantFrom(...ROUTES),
        hostileText,
        fc.boolean(),
        fc.array(fc.tuple(fc.nat(), hostileText), { maxLength: 4 }),
        async (route, param, raw, queryPairs) => {
          const names = route.query ?? ['limit']
          const query = queryPairs
            .map(([i, v]) => `${names[i % names.length]}=${encode(v, raw)}`)
            .join('&')
          const url = route.path(encode(param, raw)) + (query ? `?${query}` : '')
          const res = await injectWithin(h.app, {
            method: route.method,
            url,
            headers: { ...auth(KEY_GARDEN), ...(route.method === 'POST' ? { 'content-type': 'application/json' } : {}) },
            ...(route.method === 'POST' ? { payload: '{}' } : {}),
          })
          expectWellFormed(res, `${route.method} ${url.slice(0, 200)}`)
        },
      ),
      { numRuns: 400 },
    )
  }, 120_000)

  it('a malformed percent-encoding is a 400 problem, not fastify\'s own error body', async () => {
    // Found by the property above: the router's FST_ERR_BAD_URL bypassed the error handler.
    for (const url of ['/v1/runs/%zz', '/v1/skus/%E0%A4%A/forecast', '/v1/skus/%/history']) {
      const res = await injectWithin(h.app, { url, headers: auth(KEY_GARDEN) })
      expectWellFormed(res, url)
      expect(res.statusCode).toBe(400)
      expect(res.json().title).toBe('Bad request')
    }
  })

  it('hostile header demand: Idempotency-Key, If-None-Match, Accept, Content-Type, X-Request-Id', async () => {
    const headerText = fc.oneof(
      fc.constantFrom('', ' ', 'x'.repeat(10_240), '__proto__', '*', 'W/"x"', '"', 'text/csv;q=NaN', 'application/json; charset=utf-16'),
      fc.stringMatching(/^[\x20-\x7e]{0,80}$/),
    )
    await fc.assert(
      fc.asyncProperty(
        fc.constantFrom('idempotency-key', 'if-none-match', 'accept', 'content-type', 'x-request-id'),
        headerText,
        fc.constantFrom('/v1/runs', '/v1/runs/run-1', '/v1/runs/run-1/results', '/v1/skus/RAKE/history', '/v1/history'),
        async (name, value, url) => {
          const post = url === '/v1/runs' || url === '/v1/history'
          const res = await injectWithin(h.app, {
            method: post ? 'POST' : 'GET',
            url,
            headers: { ...auth(KEY_GARDEN), 'content-type': 'application/json', [name]: value },
            ...(post ? { payload: JSON.stringify({ horizon: 3, series: [{ sku: 'RAKE', demand: [1, 2, 3] }] }) } : {}),
          })
          expectWellFormed(res, `${name}: ${value.slice(0, 60)} ${url}`)
        },
      ),
      { numRuns: 200 },
    )
  }, 60_000)

  it('repeated query parameters and arrays in the query string', async () => {
    for (const q of ['limit=1&limit=2', 'limit[]=1', 'limit[__proto__]=1', 'sku=a&sku=b', 'cursor=&cursor=x', 'tag=a&tag=b']) {
      for (const url of [`/v1/runs/run-1/results?${q}`, `/v1/skus?${q}`]) {
        const res = await injectWithin(h.app, { url, headers: auth(KEY_GARDEN) })
        expectWellFormed(res, url)
      }
    }
  })
})
