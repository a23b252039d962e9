import { lookup as dnsLookup, type LookupAddress } from 'node:dns'
import { request as httpRequest } from 'node:http'
import { request as httpsRequest } from 'node:https'
import { isIP } from 'node:net'
import { isAllowedAddress, PRIVATE_NETWORKS_SETTING } from './addresses.js'

/**
 * One callback POST with node:http(s): no redirects followed, a hard timeout,
 * and a refusal to connect to addresses addresses.ts does not allow (without
 * private networks: loopback, private, link-local, shared, multicast and
 * IPv4-carrying IPv6 forms; with them: still link-local). The check runs in
 * the DNS lookup the connection itself uses, so a name that resolves
 * differently on a second lookup (DNS rebinding) cannot slip through.
 */

export { isPrivateAddress } from './addresses.js'

export class BlockedAddressError extends Error {
  override readonly name = 'BlockedAddressError'
  readonly code = 'EBLOCKED'
}

type LookupCallback = (err: NodeJS.ErrnoException | null, address: string | LookupAddress[], family?: number) => void

function refusal(what: string, allowPrivateNetworks: boolean): BlockedAddressError {
  return new BlockedAddressError(
    allowPrivateNetworks
      ? `${what} a link-local address; callbacks never call one`
      : `${what} a private address; set ${PRIVATE_NETWORKS_SETTING}=true to allow private networks`,
  )
}

function guardedLookup(allowPrivateNetworks: boolean) {
  return (hostname: string, options: object, callback: LookupCallback): void => {
    dnsLookup(hostname, { ...options, all: true }, (err, addresses) => {
      if (err) return callback(err, '')
      const list = addresses as LookupAddress[]
      const blocked = list.find((a) => !isAllowedAddress(a.address, allowPrivateNetworks))
      if (blocked || list.length === 0) return callback(refusal(`${hostname} resolves to`, allowPrivateNetworks), '')
      if ((options as { all?: boolean }).all) return callback(null, list)
      callback(null, list[0]!.address, list[0]!.family)
    })
  }
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
    if (isIP(host) !== 0 && !isAllowedAddress(host, opts.allowPrivateNetworks)) {
      return reject(refusal(`${host} is`, opts.allowPrivateNetworks))
    }
    const send = target.protocol === 'https:' ? httpsRequest : httpRequest
    const req = send(
      target,
      {
        method: 'POST',
        headers: { ...headers, 'content-length': String(Buffer.byteLength(body)) },
        timeout: opts.timeoutMs,
        lookup: guardedLookup(opts.allowPrivateNetworks) as never,
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
