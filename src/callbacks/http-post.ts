import { lookup as dnsLookup, type LookupAddress } from 'node:dns'
import { request as httpRequest } from 'node:http'
import { request as httpsRequest } from 'node:https'
import { BlockList, isIP } from 'node:net'

/**
 * One callback POST with node:http(s): no redirects followed, a hard timeout,
 * and (unless private networks are allowed) a refusal to connect to loopback,
 * private, link-local, shared or multicast addresses. The check runs in the
 * DNS lookup the connection itself uses, so a name that resolves differently
 * on a second lookup (DNS rebinding) cannot slip through.
 */

const PRIVATE = new BlockList()
for (const [net, prefix] of [
  ['0.0.0.0', 8], ['10.0.0.0', 8], ['100.64.0.0', 10], ['127.0.0.0', 8], ['169.254.0.0', 16],
  ['172.16.0.0', 12], ['192.0.0.0', 24], ['192.168.0.0', 16], ['198.18.0.0', 15], ['224.0.0.0', 3],
] as const) PRIVATE.addSubnet(net, prefix, 'ipv4')
for (const [net, prefix] of [['::', 127], ['fc00::', 7], ['fe80::', 10], ['ff00::', 8]] as const) PRIVATE.addSubnet(net, prefix, 'ipv6')

/** True for addresses a callback must not reach unless private networks are allowed. */
export function isPrivateAddress(address: string): boolean {
  const family = isIP(address)
  if (family === 4) return PRIVATE.check(address, 'ipv4')
  if (family !== 6) return true
  const mapped = /^::ffff:(\d+\.\d+\.\d+\.\d+)$/i.exec(address)
  return mapped ? PRIVATE.check(mapped[1]!, 'ipv4') : PRIVATE.check(address, 'ipv6')
}

export class BlockedAddressError extends Error {
  override readonly name = 'BlockedAddressError'
  readonly code = 'EBLOCKED'
}

type LookupCallback = (err: NodeJS.ErrnoException | null, address: string | LookupAddress[], family?: number) => void

function guardedLookup(hostname: string, options: object, callback: LookupCallback): void {
  dnsLookup(hostname, { ...options, all: true }, (err, addresses) => {
    if (err) return callback(err, '')
    const list = addresses as LookupAddress[]
    const blocked = list.find((a) => isPrivateAddress(a.address))
    if (blocked || list.length === 0) return callback(new BlockedAddressError(`${hostname} resolves to a private address`), '')
    if ((options as { all?: boolean }).all) return callback(null, list)
    callback(null, list[0]!.address, list[0]!.family)
  })
}

export interface PostOptions {
  readonly timeoutMs: number
  readonly allowPrivateNetworks: boolean
}

/** Resolves with the status code; rejects on network errors, timeouts and blocked addresses. */
export function postJson(url: string, body: string, headers: Record<string, string>, opts: PostOptions): Promise<number> {
  return new Promise((resolve, reject) => {
    let target: URL
    try {
      target = new URL(url)
    } catch {
      return reject(new Error('invalid URL'))
    }
    if (target.protocol !== 'http:' && target.protocol !== 'https:') return reject(new Error('only http and https URLs are called'))
    const host = target.hostname.replace(/^\[|\]$/g, '')
    if (!opts.allowPrivateNetworks && isIP(host) !== 0 && isPrivateAddress(host)) {
      return reject(new BlockedAddressError(`${host} is a private address`))
    }
    const send = target.protocol === 'https:' ? httpsRequest : httpRequest
    const req = send(
      target,
      {
        method: 'POST',
        headers: { ...headers, 'content-length': String(Buffer.byteLength(body)) },
        timeout: opts.timeoutMs,
        ...(opts.allowPrivateNetworks ? {} : { lookup: guardedLookup as never }),
      },
      (res) => {
        res.resume() // the answer body is not needed
        res.on('end', () => resolve(res.statusCode ?? 0))
        res.on('error', reject)
      },
    )
    const timer = setTimeout(() => req.destroy(Object.assign(new Error(`timed out after ${opts.timeoutMs} ms`), { code: 'ETIMEDOUT' })), opts.timeoutMs)
    req.on('timeout', () => req.destroy(Object.assign(new Error(`timed out after ${opts.timeoutMs} ms`), { code: 'ETIMEDOUT' })))
    req.on('error', (err) => {
      clearTimeout(timer)
      reject(err)
    })
    req.on('close', () => clearTimeout(timer))
    req.end(body)
  })
}
