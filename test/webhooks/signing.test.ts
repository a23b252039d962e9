import { describe, expect, it } from 'vitest'
import { newSigningSecret, signatureHeaders, signatureOf, verifySignature } from '../../src/webhooks/signing.js'

const BODY = '{"type":"run.succeeded"}'
const TS = 1767600000

describe('webhook signatures', () => {
  // Source: OpenSSL 3.0 CLI,
  //   printf '%s' '1767600000.{"type":"run.succeeded"}' | openssl dgst -sha256 -hmac 'garden-secret'
  it('is HMAC-SHA256 over `${timestamp}.${body}`, hex', () => {
    expect(signatureOf('garden-secret', TS, BODY)).toBe('1bb89ffaec57adeda4efa92fb13330514cb141620b0d4b91c1d9f1b95a24fc0f')
    expect(signatureHeaders('garden-secret', TS, BODY)).toEqual({
      'almanac-timestamp': '1767600000',
      'almanac-signature': 'v1=1bb89ffaec57adeda4efa92fb13330514cb141620b0d4b91c1d9f1b95a24fc0f',
    })
  })

  it('verifies within 5 minutes, rejects stale, future, tampered and malformed', () => {
    const h = signatureHeaders('garden-secret', TS, BODY)
    const headers = { signature: h['almanac-signature'], timestamp: h['almanac-timestamp'] }
    expect(verifySignature('garden-secret', headers, BODY, TS + 300)).toBe(true)
    expect(verifySignature('garden-secret', headers, BODY, TS + 301)).toBe(false)
    expect(verifySignature('garden-secret', headers, BODY, TS - 301)).toBe(false)
    expect(verifySignature('garden-secret', headers, `${BODY} `, TS)).toBe(false)
    expect(verifySignature('other-secret', headers, BODY, TS)).toBe(false)
    expect(verifySignature('garden-secret', { ...headers, signature: 'v1=abc' }, BODY, TS)).toBe(false)
    expect(verifySignature('garden-secret', { ...headers, timestamp: 'soon' }, BODY, TS)).toBe(false)
    expect(verifySignature('garden-secret', { ...headers, signature: undefined }, BODY, TS)).toBe(false)
    // Several signatures (e.g. during a future scheme change): one match is enough.
    expect(verifySignature('garden-secret', { ...headers, signature: `v1=${'0'.repeat(64)},${headers.signature}` }, BODY, TS)).toBe(true)
  })

  it('new secrets are 64 hex characters and differ', () => {
    const a = newSigningSecret()
    expect(a).toMatch(/^[0-9a-f]{64}$/)
    expect(newSigningSecret()).not.toBe(a)
  })
})
