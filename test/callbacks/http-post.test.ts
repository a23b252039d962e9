import { createServer } from 'node:http'
import type { AddressInfo } from 'node:net'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { isPrivateAddress, postJson } from '../../src/callbacks/http-post.js'
import { startReceiver } from './receiver.js'

// Address ranges: RFC 1918 (private), RFC 6598 (shared), RFC 3927 (link-local), RFC 4193 (unique local),
// RFC 4291 (loopback, link-local, IPv4-mapped).
describe('isPrivateAddress', () => {
  it.each([
    ['127.0.0.1', true], ['10.20.30.40', true], ['172.16.0.1', true], ['172.31.255.255', true], ['172.32.0.1', false],
    ['192.168.1.1', true], ['169.254.169.254', true], ['100.64.0.1', true], ['0.0.0.0', true], ['224.0.0.1', true],
    ['8.8.8.8', false], ['93.184.216.34', false], ['::1', true], ['::', true], ['fe80::1', true], ['fd12:3456::1', true],
    ['::ffff:127.0.0.1', true], ['::ffff:8.8.8.8', false], ['2a00:1450:4001::1', false], ['not-an-address', true],
  ] as const)('%s -> %s', (address, expected) => {
    expect(isPrivateAddress(address)).toBe(expected)
  })
})

describe('postJson', () => {
  let receiver: Awaited<ReturnType<typeof startReceiver>>
  const silent = createServer(() => {}) // accepts, never answers
  let silentUrl: string

  beforeAll(async () => {
    receiver = await startReceiver((r) => (r.path === '/moved' ? 302 : 202))
    await new Promise<void>((resolve) => silent.listen(0, '127.0.0.1', resolve))
    silentUrl = `http://127.0.0.1:${(silent.address() as AddressInfo).port}`
  })
  afterAll(async () => {
    await receiver.close()
    silent.closeAllConnections()
    await new Promise<void>((resolve) => silent.close(() => resolve()))
  })

  const allow = { timeoutMs: 2000, allowPrivateNetworks: true }
  const block = { timeoutMs: 2000, allowPrivateNetworks: false }

  it('posts the body with its headers and returns the status', async () => {
    expect(await postJson(`${receiver.url}/ok`, '{"a":1}', { 'x-test': 'yes' }, allow)).toBe(202)
    const r = receiver.received.at(-1)!
    expect(r.body).toBe('{"a":1}')
    expect(r.headers['x-test']).toBe('yes')
    expect(r.headers['content-length']).toBe('7')
  })

  it('does not follow redirects', async () => {
    expect(await postJson(`${receiver.url}/moved`, '{}', {}, allow)).toBe(302)
    expect(receiver.received.filter((r) => r.path === '/moved')).toHaveLength(1)
  })

  it('refuses private addresses, literal or resolved, unless allowed', async () => {
    const before = receiver.received.length
    await expect(postJson(`${receiver.url}/x`, '{}', {}, block)).rejects.toMatchObject({ code: 'EBLOCKED' })
    const port = new URL(receiver.url).port
    await expect(postJson(`http://localhost:${port}/x`, '{}', {}, block)).rejects.toMatchObject({ code: 'EBLOCKED' })
    await expect(postJson(`http://[::1]:${port}/x`, '{}', {}, block)).rejects.toMatchObject({ code: 'EBLOCKED' })
    expect(receiver.received.length).toBe(before)
  })

  it('gives up after the timeout', async () => {
    await expect(postJson(`${silentUrl}/slow`, '{}', {}, { timeoutMs: 150, allowPrivateNetworks: true })).rejects.toMatchObject({
      code: 'ETIMEDOUT',
      message: 'timed out after 150 ms',
    })
  })

  it('reports a refused connection by its code', async () => {
    await expect(postJson('http://127.0.0.1:1/x', '{}', {}, allow)).rejects.toMatchObject({ code: 'ECONNREFUSED' })
  })
})
