import { describe, expect, it } from 'vitest'
import { spawn } from 'node:child_process'
import { createHash } from 'node:crypto'
import { fileURLToPath } from 'node:url'
import { ConfigError, loadConfig } from '../../src/config.js'
import { build } from '../../src/http/app.js'
import { createLogger } from '../../src/logger.js'
import type { RunGateway } from '../../src/runs/contract.js'
import { InMemoryGatewayDouble, KEY_GARDEN, KEY_HEATING, auth, sha256, testConfig } from './gateway-double.js'

/**
 * Secrets (API keys, their digests, Redis passwords, internal error details)
 * never reach the log or a response body.
 */

function capture() {
  const lines: string[] = []
  const logger = createLogger({ level: 'trace', destination: { write: (s: string) => void lines.push(s) } })
  return { logger, lines }
}

/** Everything that could give a key away: the key, its SHA-256 in hex and base64, its bearer header. */
const tracesOf = (key: string) => [
  key,
  sha256(key),
  createHash('sha256').update(key, 'utf8').digest('base64'),
  key.slice(4, -4), // a long fragment
]

const INTERNAL = 'redis://:hunter2-internal-secret@10.0.0.7:6379 exploded at frame 0x7f'

/** TEST DOUBLE: a gateway whose every call fails with an error full of internal detail. */
function throwingGateway(): RunGateway {
  const fail = async (): Promise<never> => {
    const err = new Error(INTERNAL) as Error & { code?: string; command?: unknown }
    err.code = 'ERR_SOMETHING_INTERNAL'
    err.command = { name: 'evalsha', args: ['sha', 'almanac:acme:run:1'] }
    throw err
  }
  return {
    submit: fail,
    submitSelection: fail,
    get: fail,
    results: fail,
    cancel: fail,
    latestForecast: fail,
    ping: fail,
    stats: fail,
  } as RunGateway
}

describe('secrets stay out of logs and answers', () => {
  it('requests with a valid, an invalid and a malformed key: no key or digest in the log or the bodies', async () => {
    const { logger, lines } = capture()
    const app = await build({ config: testConfig(), gateway: new InMemoryGatewayDouble(), logger })
    const wrongKey = 'wrong-key-that-looks-real-0123456789'
    const bodies: string[] = []
    const headerSets = [
      auth(KEY_GARDEN),
      auth(wrongKey),
      { authorization: `Basic ${Buffer.from(`garden:${KEY_HEATING}`).toString('base64')}` },
      { authorization: KEY_HEATING },
      { authorization: `Bearer ${KEY_GARDEN} extra` },
    ]
    for (const headers of headerSets) {
      for (const req of [
        { method: 'GET' as const, url: '/v1/runs/run-1' },
        { method: 'POST' as const, url: '/v1/runs', payload: { horizon: 1, series: [{ sku: 'SPADE', demand: [1, 2] }] } },
        { method: 'POST' as const, url: '/v1/runs', payload: { horizon: 'x' } },
      ]) {
        const res = await app.inject({ ...req, headers })
        bodies.push(JSON.stringify(res.headers), res.body)
      }
    }
    await app.close()
    const log = lines.join('\n')
    expect(lines.length).toBeGreaterThan(10)
    expect(log).toContain('request completed')
    for (const key of [KEY_GARDEN, KEY_HEATING, wrongKey]) {
      for (const trace of tracesOf(key)) {
        expect(log).not.toContain(trace)
        expect(bodies.join('\n')).not.toContain(trace)
      }
    }
    // The invalid key was refused, and the refusal was logged without it.
    expect(bodies.join('\n')).toContain('The API key is not valid')
  })

  it('an internal failure answers only "Internal Server Error" on every gateway route; the detail goes to the log only', async () => {
    const { logger, lines } = capture()
    const app = await build({ config: testConfig(), gateway: throwingGateway(), logger })
    const requests = [
      { method: 'POST' as const, url: '/v1/runs', payload: { horizon: 1, series: [{ sku: 'SPADE', demand: [1, 2] }] } },
      { method: 'GET' as const, url: '/v1/runs/run-1' },
      { method: 'GET' as const, url: '/v1/runs/run-1/results' },
      { method: 'DELETE' as const, url: '/v1/runs/run-1' },
      { method: 'GET' as const, url: '/v1/skus/SPADE/forecast' },
    ]
    for (const req of requests) {
      const res = await app.inject({ ...req, headers: auth(KEY_GARDEN) })
      expect(res.statusCode, req.url).toBe(500)
      expect(res.json(), req.url).toEqual({
        type: 'https://almanac.example/problems/internal',
        title: 'Internal Server Error',
        status: 500,
      })
      expect(res.body).not.toMatch(/hunter2|10\.0\.0\.7|evalsha|ERR_SOMETHING|\bat\b.+:\d+/)
    }
    // Readiness says only that Redis is not reachable.
    const ready = await app.inject({ url: '/readyz' })
    expect(ready.statusCode).toBe(503)
    expect(ready.body).not.toMatch(/hunter2|10\.0\.0\.7/)
    await app.close()
    const failures = lines.map((l) => JSON.parse(l)).filter((l) => l.msg === 'request failed')
    expect(failures).toHaveLength(requests.length)
    expect(failures[0].err.message).toBe(INTERNAL)
  })

  it('an error that carries a 4xx status but is not fastify\'s own does not show its message', async () => {
    const { logger } = capture()
    const gateway = new InMemoryGatewayDouble()
    gateway.get = async () => {
      throw Object.assign(new Error(`upstream said no: ${INTERNAL}`), { statusCode: 400 })
    }
    const app = await build({ config: testConfig(), gateway, logger })
    const res = await app.inject({ url: '/v1/runs/run-1', headers: auth(KEY_GARDEN) })
    await app.close()
    expect(res.statusCode).toBe(400)
    expect(res.json().detail).toBeUndefined()
    expect(res.body).not.toMatch(/hunter2|10\.0\.0\.7|upstream said no/)
  })

  it('a config error names the variable and the entry, never the key', () => {
    const secret = 'super-secret-key-value-0123456789'
    const cases = [
      { API_KEYS: `bad tenant!:${secret}` },
      { API_KEYS: `garden:${secret},heating:short` },
      { API_KEYS: `:${secret}` },
      { API_KEYS: secret },
      { API_KEYS: `garden:${secret}`, PORT: 'not-a-port', HOST: '0.0.0.0' },
    ]
    for (const env of cases) {
      let message = ''
      try {
        loadConfig(env, { readFile: () => '', hash: sha256 })
      } catch (err) {
        if (!(err instanceof ConfigError)) throw err
        message = `${err.message}\n${err.problems.join('\n')}`
      }
      expect(message, JSON.stringify(env)).not.toBe('')
      for (const trace of tracesOf(secret)) expect(message).not.toContain(trace)
    }
  })

  it('the server process with a bad config or unreachable Redis prints neither key nor Redis password', async () => {
    const secret = 'process-secret-key-0123456789'
    const password = 'redis-password-0123456789'
    const run = (env: Record<string, string>) =>
      new Promise<{ code: number | null; out: string }>((resolve) => {
        const child = spawn(process.execPath, ['--import', 'tsx', 'src/server.ts'], {
          cwd: fileURLToPath(new URL('../../', import.meta.url)),
          env: { PATH: process.env.PATH ?? '', ...env },
          stdio: ['ignore', 'pipe', 'pipe'],
        })
        let out = ''
        child.stdout.on('data', (d) => (out += d))
        child.stderr.on('data', (d) => (out += d))
        child.on('exit', (code) => resolve({ code, out }))
      })
    const badConfig = await run({ API_KEYS: `garden:${secret},heating:short`, PORT: 'x' })
    expect(badConfig.code).toBe(1)
    expect(badConfig.out).toContain('invalid configuration')
    const noRedis = await run({ API_KEYS: `garden:${secret}`, REDIS_URL: `redis://:${password}@127.0.0.1:1`, PORT: '0' })
    expect(noRedis.code).toBe(1)
    expect(noRedis.out).toContain('Redis is not reachable')
    for (const out of [badConfig.out, noRedis.out]) {
      for (const trace of [...tracesOf(secret), password]) expect(out).not.toContain(trace)
    }
  }, 30_000)
})
