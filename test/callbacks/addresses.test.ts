import fc from 'fast-check'
import { UnrecoverableError, type Job } from 'bullmq'
import { describe, expect, it } from 'vitest'
import { callbackUrlRefusal, isAllowedAddress, isPrivateAddress } from '../../src/callbacks/addresses.js'
import { createCallbackProcessor } from '../../src/callbacks/processor.js'
import { DELIVERY_JOB } from '../../src/callbacks/names.js'
import { postJson } from '../../src/callbacks/http-post.js'
import { createLogger } from '../../src/logger.js'

/**
 * Issue 14 finding 14. Ranges: RFC 4291 2.5.5 (IPv4-compatible and -mapped), RFC 6052 and RFC 8215 (NAT64
 * 64:ff9b::/96, 64:ff9b:1::/48), RFC 6145 (SIIT ::ffff:0:0/96), RFC 3056 (6to4 2002::/16), RFC 4380 (Teredo
 * 2001::/32), RFC 3879 (site-local fec0::/10, deprecated), RFC 3927 and RFC 4291 (link-local).
 */

const octet = fc.integer({ min: 0, max: 255 })
const privateV4 = fc.oneof(
  fc.tuple(fc.constant(127), octet, octet, octet),
  fc.tuple(fc.constant(10), octet, octet, octet),
  fc.tuple(fc.constant(192), fc.constant(168), octet, octet),
  fc.tuple(fc.constant(169), fc.constant(254), octet, octet),
  fc.tuple(fc.constant(172), fc.integer({ min: 16, max: 31 }), octet, octet),
)
const hex16 = (a: number, b: number) => ((a << 8) | b).toString(16)

describe('isPrivateAddress: IPv6 forms that carry or reach an IPv4 address', () => {
  // Before the fix ::a.b.c.d, ::ffff:0:a.b.c.d, 64:ff9b::a.b.c.d and 2002:aabb:ccdd:: passed (seen failing).
  it('refuses every private IPv4 address in every embedding, dotted or in hex', () => {
    fc.assert(
      fc.property(privateV4, ([a, b, c, d]) => {
        const dotted = `${a}.${b}.${c}.${d}`
        const forms = [
          `::${dotted}`,
          `::${hex16(a, b)}:${hex16(c, d)}`,
          `::ffff:${dotted}`,
          `::ffff:0:${dotted}`,
          `::ffff:0:${hex16(a, b)}:${hex16(c, d)}`,
          `64:ff9b::${dotted}`,
          `64:ff9b:1::${hex16(a, b)}:${hex16(c, d)}`,
          `2002:${hex16(a, b)}:${hex16(c, d)}::1`,
        ]
        for (const form of forms) expect(isPrivateAddress(form), form).toBe(true)
      }),
      { numRuns: 300 },
    )
  })

  it.each([
    ['fec0::1', true], ['feff::1', true], ['2001:0:4136:e378:8000:63bf:3fff:fdd2', true], ['2001:db8::1', true],
    ['2a00:1450:4001::1', false], ['2606:4700::1111', false], ['8.8.8.8', false], ['::ffff:8.8.8.8', false],
  ] as const)('%s -> %s', (address, expected) => {
    expect(isPrivateAddress(address)).toBe(expected)
  })

  it('keeps link-local (cloud metadata) refused when private networks are allowed', () => {
    for (const a of ['169.254.169.254', 'fe80::1', 'fd00:ec2::254', '::ffff:169.254.169.254']) expect(isAllowedAddress(a, true), a).toBe(false)
    for (const a of ['127.0.0.1', '10.1.2.3', '::1', 'fd12::1']) expect(isAllowedAddress(a, true), a).toBe(true)
  })
})

describe('callbackUrlRefusal (registration)', () => {
  it('names the setting for private literals and localhost, and never allows link-local', () => {
    expect(callbackUrlRefusal('http://[::ffff:0:127.0.0.1]/hook', false)).toBe(
      '::ffff:0:7f00:1 is not a public address; callbacks call only public addresses unless CALLBACK_ALLOW_PRIVATE_NETWORKS=true',
    )
    expect(callbackUrlRefusal('http://erp.localhost:8080/hook', false)).toMatch(/^erp\.localhost is this machine/)
    expect(callbackUrlRefusal('http://169.254.169.254/latest', true)).toBe(
      '169.254.169.254 is a link-local address (where clouds serve instance metadata); callbacks never call it',
    )
    expect(callbackUrlRefusal('http://10.0.0.5/hook', true)).toBeNull()
    expect(callbackUrlRefusal('https://erp.example/hooks/almanac', false)).toBeNull()
  })
})

describe('postJson with private networks allowed', () => {
  it('still refuses a link-local literal', async () => {
    await expect(postJson('http://169.254.169.254/latest/meta-data', '{}', {}, { timeoutMs: 500, allowPrivateNetworks: true })).rejects.toMatchObject({
      code: 'EBLOCKED',
      message: '169.254.169.254 is a link-local address; callbacks never call one',
    })
  })
})

describe('a delivery to a refused address', () => {
  // Before the fix it was retried until attempts ran out (seen failing).
  it('is dead after one attempt, not retried, and says which setting to change', async () => {
    const recorded: { status: string; failure: unknown }[] = []
    const process = createCallbackProcessor({
      runs: { getRun: async () => null },
      callbacks: { signingSecrets: async () => ['s'.repeat(32)] } as never,
      deliveries: { recordAttempt: async (...args: unknown[]) => void recorded.push({ status: args[4] as string, failure: (args[3] as { failure: unknown }).failure }) } as never,
      enqueue: async () => undefined,
      settings: { attempts: 5, backoffMs: 10, timeoutMs: 500, allowPrivateNetworks: false },
      logger: createLogger({ level: 'silent' }),
    })
    const job = {
      id: 'd1',
      name: DELIVERY_JOB,
      attemptsMade: 0,
      opts: { attempts: 5 },
      data: { tenant: 'garden', runId: 'r1', deliveryId: 'd1', url: 'http://10.0.0.9/hook', event: 'run.succeeded', body: '{}' },
    } as unknown as Job
    await expect(process(job)).rejects.toBeInstanceOf(UnrecoverableError)
    expect(recorded).toEqual([
      {
        status: 'dead',
        failure: { code: 'address-not-allowed', message: '10.0.0.9 is a private address; set CALLBACK_ALLOW_PRIVATE_NETWORKS=true to allow private networks' },
      },
    ])
  })
})
