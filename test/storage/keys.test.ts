import { describe, expect, it } from 'vitest'
import { latestKey, runKeys } from '../../src/storage/keys.js'

describe('key layout', () => {
  it('namespaces by prefix and tenant and tags a run for one cluster slot', () => {
    const k = runKeys('almanac', 'acme', 'r-1')
    expect(k.run).toBe('almanac:t:acme:run:{r-1}')
    expect(k.items).toBe('almanac:t:acme:run:{r-1}:items')
    expect(k.skus).toBe('almanac:t:acme:run:{r-1}:skus')
    expect(k.chunks).toBe('almanac:t:acme:run:{r-1}:chunks')
    expect(k.input(3)).toBe('almanac:t:acme:run:{r-1}:in:3')
    expect(latestKey('almanac', 'acme')).toBe('almanac:t:acme:latest')
  })

  it('refuses tenants and run ids that could escape their namespace or hash tag', () => {
    for (const tenant of ['', 'a:b', 'a{b}', 'a*', 'x'.repeat(65)]) expect(() => latestKey('p', tenant)).toThrow(/invalid tenant/)
    for (const runId of ['', 'a}b', 'a:b', 'a b']) expect(() => runKeys('p', 'acme', runId)).toThrow(/invalid run id/)
  })
})
