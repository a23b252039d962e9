import { createHmac, randomBytes, timingSafeEqual } from 'node:crypto'

/**
 * Webhook signatures. The signed text is `${timestamp}.${body}` (timestamp in
 * Unix seconds, body the exact bytes sent); the MAC is HMAC-SHA256 with the
 * tenant's signing secret, sent as hex:
 *
 *   Almanac-Timestamp: 1767600000
 *   Almanac-Signature: v1=5d41402abc4b2a76b9719d911017c592...
 *
 * A receiver recomputes the MAC over the raw body, compares it in constant
 * time, and rejects timestamps more than 5 minutes away from its clock
 * (replays). `v1` names the scheme so a later one can be sent beside it.
 */

export const SIGNATURE_HEADER = 'almanac-signature'
export const TIMESTAMP_HEADER = 'almanac-timestamp'
export const SIGNATURE_TOLERANCE_SECONDS = 300

/** A new signing secret: 32 random bytes as 64 hex characters. */
export function newSigningSecret(): string {
  return randomBytes(32).toString('hex')
}

export function signatureOf(secret: string, timestamp: number, body: string): string {
  return createHmac('sha256', secret).update(`${timestamp}.${body}`, 'utf8').digest('hex')
}

export function signatureHeaders(secret: string, timestamp: number, body: string): Record<string, string> {
  return { [TIMESTAMP_HEADER]: String(timestamp), [SIGNATURE_HEADER]: `v1=${signatureOf(secret, timestamp, body)}` }
}

/**
 * What a receiver does, as a reference: true when some `v1=` signature in the
 * header matches and the timestamp is within the tolerance of `nowSeconds`.
 */
export function verifySignature(
  secret: string,
  headers: { readonly signature: string | undefined; readonly timestamp: string | undefined },
  body: string,
  nowSeconds: number,
  toleranceSeconds = SIGNATURE_TOLERANCE_SECONDS,
): boolean {
  const ts = Number(headers.timestamp)
  if (!headers.signature || !Number.isInteger(ts) || Math.abs(nowSeconds - ts) > toleranceSeconds) return false
  const expected = Buffer.from(signatureOf(secret, ts, body), 'hex')
  return headers.signature.split(',').some((part) => {
    const m = /^\s*v1=([0-9a-f]{64})\s*$/.exec(part)
    return m !== null && timingSafeEqual(Buffer.from(m[1]!, 'hex'), expected)
  })
}
