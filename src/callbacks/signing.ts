import { createHmac, timingSafeEqual } from 'node:crypto'

/**
 * Callback signatures. Every delivery carries
 *
 *   Almanac-Delivery:  d-3f9c...            the delivery's id, the same on each retry
 *   Almanac-Sent-At:   1767600000           Unix seconds when this attempt was sent
 *   Almanac-Signature: hmac-sha256=5d41...  HMAC-SHA256, hex, of the three lines
 *                                           `${delivery}\n${sentAt}\n${body}`
 *
 * with the tenant's signing secret; the body is the exact bytes sent. Signing
 * the delivery id lets a receiver drop a replayed delivery by id as well as by
 * age. While a rotated secret is still in its grace period the header holds
 * one signature per secret, comma-separated; one match is enough.
 */

export const SIGNATURE_HEADER = 'almanac-signature'
export const SENT_AT_HEADER = 'almanac-sent-at'
export const DELIVERY_HEADER = 'almanac-delivery'
export const SIGNATURE_SCHEME = 'hmac-sha256'
/** How far a receiver should accept Almanac-Sent-At from its own clock (common practice: 5 minutes). */
export const SIGNATURE_TOLERANCE_SECONDS = 300

export function signatureOf(secret: string, delivery: string, sentAt: number, body: string): string {
  return createHmac('sha256', secret).update(`${delivery}\n${sentAt}\n${body}`, 'utf8').digest('hex')
}

/** The signature headers of one attempt, signed with every secret given (current first). */
export function signatureHeaders(secrets: readonly string[], delivery: string, sentAt: number, body: string): Record<string, string> {
  return {
    [DELIVERY_HEADER]: delivery,
    [SENT_AT_HEADER]: String(sentAt),
    [SIGNATURE_HEADER]: secrets.map((s) => `${SIGNATURE_SCHEME}=${signatureOf(s, delivery, sentAt, body)}`).join(','),
  }
}

/**
 * What a receiver does, as a reference: true when some `hmac-sha256=` signature in
 * the header matches and Almanac-Sent-At is within the tolerance of `nowSeconds`.
 */
export function verifySignature(
  secret: string,
  headers: { readonly signature: string | undefined; readonly delivery: string | undefined; readonly sentAt: string | undefined },
  body: string,
  nowSeconds: number,
  toleranceSeconds = SIGNATURE_TOLERANCE_SECONDS,
): boolean {
  const sentAt = Number(headers.sentAt)
  if (!headers.signature || !headers.delivery || !Number.isInteger(sentAt) || Math.abs(nowSeconds - sentAt) > toleranceSeconds) return false
  const expected = Buffer.from(signatureOf(secret, headers.delivery, sentAt, body), 'hex')
  return headers.signature.split(',').some((part) => {
    const m = /^\s*hmac-sha256=([0-9a-f]{64})\s*$/.exec(part)
    return m !== null && timingSafeEqual(Buffer.from(m[1]!, 'hex'), expected)
  })
}
