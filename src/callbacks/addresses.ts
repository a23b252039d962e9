import { BlockList, isIP } from 'node:net'

/**
 * Which addresses a callback may reach. Without CALLBACK_ALLOW_PRIVATE_NETWORKS:
 * only public unicast ones. IPv6 forms that carry an IPv4 address or reach
 * one through a translator (IPv4-compatible ::a.b.c.d, IPv4-mapped, SIIT
 * ::ffff:0:a.b.c.d, NAT64 64:ff9b::/96 and 64:ff9b:1::/48, 6to4 2002::/16,
 * Teredo 2001::/32) are refused whole, as is deprecated site-local fec0::/10:
 * a receiver has no reason to use them, and checking each embedded address
 * would miss the next encoding. Link-local addresses (where clouds serve
 * instance metadata and credentials) are refused even when private networks
 * are allowed.
 */

const PRIVATE_V4: readonly (readonly [string, number])[] = [
  ['0.0.0.0', 8], ['10.0.0.0', 8], ['100.64.0.0', 10], ['127.0.0.0', 8], ['169.254.0.0', 16], ['172.16.0.0', 12],
  ['192.0.0.0', 24], ['192.0.2.0', 24], ['192.168.0.0', 16], ['198.18.0.0', 15], ['198.51.100.0', 24],
  ['203.0.113.0', 24], ['224.0.0.0', 3],
]
const PRIVATE_V6: readonly (readonly [string, number])[] = [
  // IPv4-mapped ::ffff:0:0/96 is not listed: BlockList checks it against the IPv4 rules (and would apply it to every IPv4 address).
  ['::', 96], ['::ffff:0:0:0', 96], ['64:ff9b::', 96], ['64:ff9b:1::', 48], ['100::', 64],
  ['2001::', 32], ['2001:db8::', 32], ['2002::', 16], ['fc00::', 7], ['fe80::', 10], ['fec0::', 10], ['ff00::', 8],
]
/** Link-local (RFC 3927, RFC 4291) and the IPv6 metadata address one cloud uses inside fc00::/7. */
const LINK_LOCAL_V4: readonly (readonly [string, number])[] = [['169.254.0.0', 16]]
const LINK_LOCAL_V6: readonly (readonly [string, number])[] = [['fe80::', 10], ['fd00:ec2::254', 128]]

function blockList(v4: readonly (readonly [string, number])[], v6: readonly (readonly [string, number])[]): BlockList {
  const list = new BlockList()
  for (const [net, prefix] of v4) list.addSubnet(net, prefix, 'ipv4')
  for (const [net, prefix] of v6) list.addSubnet(net, prefix, 'ipv6')
  return list
}
const PRIVATE = blockList(PRIVATE_V4, PRIVATE_V6)
const LINK_LOCAL = blockList(LINK_LOCAL_V4, LINK_LOCAL_V6)

function check(list: BlockList, address: string): boolean {
  const family = isIP(address)
  if (family === 4) return list.check(address, 'ipv4')
  if (family !== 6) return true
  // BlockList applies IPv4 rules to IPv4-mapped addresses itself.
  return list.check(address, 'ipv6')
}

/** True for addresses a callback must not reach unless private networks are allowed (and for anything not an address). */
export function isPrivateAddress(address: string): boolean {
  return check(PRIVATE, address)
}

/** True for link-local addresses, never reached (and for anything not an address). */
export function isLinkLocalAddress(address: string): boolean {
  return check(LINK_LOCAL, address)
}

/** Whether an address may be called under the setting. */
export function isAllowedAddress(address: string, allowPrivateNetworks: boolean): boolean {
  return allowPrivateNetworks ? !isLinkLocalAddress(address) : !isPrivateAddress(address)
}

/** The setting that lets callbacks reach private addresses, as operators write it. */
export const PRIVATE_NETWORKS_SETTING = 'CALLBACK_ALLOW_PRIVATE_NETWORKS'

/**
 * Why a callback URL is refused when it is registered, or null. Only what the
 * URL itself says is judged: an address literal, or a `localhost` name. Other
 * names are checked on every delivery against what they resolve to then (a
 * lookup now would prove nothing about later ones).
 */
export function callbackUrlRefusal(url: string, allowPrivateNetworks: boolean): string | null {
  let host: string
  try {
    host = new URL(url).hostname.replace(/^\[|\]$/g, '').toLowerCase()
  } catch {
    return 'is not a URL'
  }
  if (isIP(host) !== 0) {
    if (isAllowedAddress(host, allowPrivateNetworks)) return null
    return allowPrivateNetworks || isLinkLocalAddress(host)
      ? `${host} is a link-local address (where clouds serve instance metadata); callbacks never call it`
      : `${host} is not a public address; callbacks call only public addresses unless ${PRIVATE_NETWORKS_SETTING}=true`
  }
  if (!allowPrivateNetworks && (host === 'localhost' || host.endsWith('.localhost'))) {
    return `${host} is this machine; callbacks call only public addresses unless ${PRIVATE_NETWORKS_SETTING}=true`
  }
  return null
}
