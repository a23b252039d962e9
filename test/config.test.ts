import fc from 'fast-check'
import { createHash } from 'node:crypto'
import { describe, expect, it } from 'vitest'
import { ConfigError, isLoopback, loadConfig, parseRedisNode, queuePrefix } from '../src/config.js'

const sha256 = (s: string) => createHash('sha256').update(s, 'utf8').digest('hex')
const noFile = (path: string): string => {
  throw new Error(`ENOENT: ${path}`)
}
const load = (env: Record<string, string>, readFile = noFile) => loadConfig(env, { readFile, hash: sha256 })

function problemsOf(fn: () => unknown): readonly string[] {
  try {
    fn()
  } catch (err) {
    if (err instanceof ConfigError) return err.problems
    throw err
  }
  throw new Error('expected a ConfigError')
}

describe('loadConfig', () => {
  it('defaults: loopback without keys, documented limits', () => {
    const c = load({})
    expect(c.host).toBe('127.0.0.1')
    expect(c.port).toBe(8080)
    expect(c.apiKeys.size).toBe(0)
    expect(c.bodyLimitBytes).toBe(64 * 1024 * 1024)
    expect(c.syncMaxSeries).toBe(100)
    expect(c.rateLimitMax).toBe(6000)
    expect(c.rateLimitWindowMs).toBe(60_000)
    expect(c.runWorker).toBe(true)
  })

  it('keeps API keys only as SHA-256 digests per tenant, from env and file', () => {
    const file = '# tenants\nheating:heating-key-0123456789\n\ngarden:second-garden-key-0123\n'
    const c = load({ API_KEYS: 'garden:garden-key-0123456789', API_KEYS_FILE: '/keys' }, () => file)
    expect(c.apiKeys.get('garden')).toEqual([sha256('garden-key-0123456789'), sha256('second-garden-key-0123')])
    expect(c.apiKeys.get('heating')).toEqual([sha256('heating-key-0123456789')])
    expect(JSON.stringify([...c.apiKeys])).not.toContain('garden-key-0123456789')
    expect(c.host).toBe('0.0.0.0')
  })

  it('lists every problem at once', () => {
    const problems = problemsOf(() => load({ PORT: 'eighty', SYNC_MAX_SERIES: '0', LOG_LEVEL: 'loud' }))
    expect(problems).toHaveLength(3)
    expect(problems.map((p) => p.split(':')[0]).sort()).toEqual(['LOG_LEVEL', 'PORT', 'SYNC_MAX_SERIES'])
  })

  it('rejects malformed key entries and short keys', () => {
    const problems = problemsOf(() => load({ API_KEYS: 'garden:short,no-colon-here-0123456789' }))
    expect(problems).toHaveLength(2)
  })

  // Issue 14 finding 11. Before the fix each of these started, with auth off or a key that could never match (seen failing).
  it('refuses key settings that would turn auth off or hold unusable or shared keys', () => {
    for (const value of [' ', ',', ' , ,']) {
      expect(problemsOf(() => load({ API_KEYS: value }))).toEqual(['API_KEYS: set but holds no tenant:key entry; unset it to run without authentication'])
    }
    expect(problemsOf(() => load({ API_KEYS_FILE: '/keys' }, () => '# no keys yet\n\n   \n# still none\n'))).toEqual([
      'API_KEYS_FILE: holds no tenant:key entry (only blanks or comments); unset it to run without authentication',
    ])
    expect(problemsOf(() => load({ API_KEYS: 'garden:shared-key-0123456789,heating:shared-key-0123456789' }))).toEqual([
      'API keys: one key is given 2 times (tenants garden, heating); every key must be unique',
    ])
    expect(problemsOf(() => load({ API_KEYS: 'garden:shared-key-0123456789', API_KEYS_FILE: '/keys' }, () => 'heating:shared-key-0123456789\n'))).toHaveLength(1)
    expect(load({ API_KEYS: '' }).apiKeys.size).toBe(0)
  })

  it('refuses any key holding a space or a character other than visible ASCII', () => {
    const visible = fc.string({ unit: fc.integer({ min: 0x21, max: 0x7e }).map((c) => String.fromCharCode(c)), minLength: 8, maxLength: 12 }).filter((k) => !k.includes(','))
    const bad = fc.constantFrom(' ', '\t', '\u00a0', '\u3000', 'é', '\u0007')
    fc.assert(
      fc.property(visible, bad, visible, (a, c, b) => {
        const problems = problemsOf(() => load({ API_KEYS: `garden:${a}${c}${b}` }))
        expect(problems).toEqual(['API key entry 1: the key of tenant garden holds spaces or characters other than visible ASCII, so no request could send it'])
      }),
      { numRuns: 200 },
    )
    expect(problemsOf(() => load({ API_KEYS: 'garden: leading-space-key-0123' }))).toHaveLength(1)
  })

  it('says when the key file cannot be read', () => {
    expect(problemsOf(() => load({ API_KEYS_FILE: '/missing' }))[0]).toMatch(/^API_KEYS_FILE: cannot read/)
  })

  it('refuses a non-loopback HOST without API keys, allows it with keys', () => {
    expect(problemsOf(() => load({ HOST: '0.0.0.0' }))[0]).toMatch(/^HOST: 0\.0\.0\.0 would open the service/)
    expect(load({ HOST: '127.0.0.1' }).host).toBe('127.0.0.1')
    expect(load({ HOST: '0.0.0.0', API_KEYS: 'garden:garden-key-0123456789' }).host).toBe('0.0.0.0')
  })

  it('recognises loopback addresses', () => {
    expect(['127.0.0.1', '127.1.2.3', '::1', 'localhost'].every(isLoopback)).toBe(true)
    expect(['0.0.0.0', '::', '10.0.0.1', '127.0.0.1.evil'].some(isLoopback)).toBe(false)
  })

  it('one Redis server by default: no cluster nodes, queues under the plain prefix', () => {
    const c = load({ REDIS_PREFIX: 'shop' })
    expect(c.redisClusterNodes).toBeUndefined()
    expect(queuePrefix(c)).toBe('shop')
  })

  it('REDIS_CLUSTER_NODES: seed nodes, and the queue prefix becomes one hash tag', () => {
    const c = load({ REDIS_CLUSTER_NODES: 'redis-a:7000, 10.0.0.2:7001,[::1]:7002', REDIS_PREFIX: 'shop' })
    expect(c.redisClusterNodes).toEqual([
      { host: 'redis-a', port: 7000 },
      { host: '10.0.0.2', port: 7001 },
      { host: '::1', port: 7002 },
    ])
    expect(c.redisPrefix).toBe('shop')
    expect(queuePrefix(c)).toBe('{shop}')
  })

  it('REDIS_CLUSTER_NODES: names each malformed entry; an empty value means no cluster', () => {
    const problems = problemsOf(() => load({ REDIS_CLUSTER_NODES: 'redis-a:7000,redis-b,redis-c:0' }))
    expect(problems).toEqual([
      'REDIS_CLUSTER_NODES: entry 2 ("redis-b") is not host:port with a port of 1-65535',
      'REDIS_CLUSTER_NODES: entry 3 ("redis-c:0") is not host:port with a port of 1-65535',
    ])
    expect(load({ REDIS_CLUSTER_NODES: ' ' }).redisClusterNodes).toBeUndefined()
    expect(parseRedisNode('host:65536')).toBeNull()
  })

  it('a cluster has only database 0, so a database number in REDIS_URL is refused there', () => {
    expect(problemsOf(() => load({ REDIS_CLUSTER_NODES: 'redis-a:7000', REDIS_URL: 'redis://redis-a:7000/2' }))[0]).toMatch(/^REDIS_URL: a Redis Cluster has only database 0/)
    expect(load({ REDIS_CLUSTER_NODES: 'redis-a:7000', REDIS_URL: 'redis://redis-a:7000/0' }).redisClusterNodes).toHaveLength(1)
    expect(load({ REDIS_URL: 'redis://127.0.0.1:6379/2' }).redisUrl).toBe('redis://127.0.0.1:6379/2')
  })

  it('HISTORY_IDLE_DAYS: off (0) by default, whole days up to 100 years, anything else refused by name', () => {
    expect(load({}).historyIdleDays).toBe(0)
    expect(load({ HISTORY_IDLE_DAYS: '400' }).historyIdleDays).toBe(400)
    expect(load({ HISTORY_IDLE_DAYS: '36500' }).historyIdleDays).toBe(36_500)
    for (const bad of ['-1', 'ten', '1.5', '36501']) {
      const problems = problemsOf(() => load({ HISTORY_IDLE_DAYS: bad }))
      expect(problems).toHaveLength(1)
      expect(problems[0]).toMatch(/^HISTORY_IDLE_DAYS: /)
    }
  })

  it('UPLOAD_SPILL_BYTES: 8 MiB by default, 64 KiB to 1 GiB, anything else refused by name', () => {
    expect(load({}).uploadSpillBytes).toBe(8 * 1024 * 1024)
    expect(load({ UPLOAD_SPILL_BYTES: '65536' }).uploadSpillBytes).toBe(65_536)
    for (const bad of ['1000', 'lots', '2147483648']) {
      const problems = problemsOf(() => load({ UPLOAD_SPILL_BYTES: bad }))
      expect(problems).toHaveLength(1)
      expect(problems[0]).toMatch(/^UPLOAD_SPILL_BYTES: /)
    }
  })
})
