import { describe, expect, it } from 'vitest'
import { signatureHeaders, signatureOf, verifySignature } from '../../src/callbacks/signing.js'
import { newSigningSecret } from '../../src/storage/erp/callback-store.js'

const BODY = '{"type":"run.succeeded"}'
const SENT_AT = 1767600000
const DELIVERY = 'd-0123456789abcdef0123456789abcdef'

describe('callback signatures', () => {
  // Source: OpenSSL 3.0 CLI,
  //   printf '%s\n%s\n%s' 'd-0123456789abcdef0123456789abcdef' '1767600000' '{"type":"run.succeeded"}' |
  //     openssl dgst -sha256 -hmac 'garden-secret'
  it('is HMAC-SHA256 over delivery id, sent-at and body on three lines, hex', () => {
    const mac = 'a5b6c25aacd872c73403a4b57903c19d551459c7bccd1f17825e479ebbc9805e'
    expect(signatureOf('garden-secret', DELIVERY, SENT_AT, BODY)).toBe(mac)
    expect(signatureHeaders(['garden-secret'], DELIVERY, SENT_AT, BODY)).toEqual({
      'almanac-delivery': DELIVERY,
      'almanac-sent-at': '1767600000',
      'almanac-signature': `hmac-sha256=${mac}`,
    })
  })

  it('verifies within 5 minutes, rejects stale, future, tampered, another delivery id and malformed', () => {
    const h = signatureHeaders(['garden-secret'], DELIVERY, SENT_AT, BODY)
    const headers = { signature: h['almanac-signature'], delivery: h['almanac-delivery'], sentAt: h['almanac-sent-at'] }
    expect(verifySignature('garden-secret', headers, BODY, SENT_AT + 300)).toBe(true)
    expect(verifySignature('garden-secret', headers, BODY, SENT_AT + 301)).toBe(false)
    expect(verifySignature('garden-secret', headers, BODY, SENT_AT - 301)).toBe(false)
    expect(verifySignature('garden-secret', headers, `${BODY} `, SENT_AT)).toBe(false)
    expect(verifySignature('other-secret', headers, BODY, SENT_AT)).toBe(false)
    expect(verifySignature('garden-secret', { ...headers, delivery: 'd-another' }, BODY, SENT_AT)).toBe(false)
    expect(verifySignature('garden-secret', { ...headers, signature: 'hmac-sha256=abc' }, BODY, SENT_AT)).toBe(false)
    expect(verifySignature('garden-secret', { ...headers, sentAt: 'soon' }, BODY, SENT_AT)).toBe(false)
    expect(verifySignature('garden-secret', { ...headers, signature: undefined }, BODY, SENT_AT)).toBe(false)
  })

  it('signs with every secret during a rotation; a receiver with either one verifies', () => {
    const h = signatureHeaders(['new-secret', 'old-secret'], DELIVERY, SENT_AT, BODY)
    expect(h['almanac-signature']!.split(',')).toHaveLength(2)
    const headers = { signature: h['almanac-signature'], delivery: DELIVERY, sentAt: h['almanac-sent-at'] }
    expect(verifySignature('new-secret', headers, BODY, SENT_AT)).toBe(true)
    expect(verifySignature('old-secret', headers, BODY, SENT_AT)).toBe(true)
    expect(verifySignature('third-secret', headers, BODY, SENT_AT)).toBe(false)
  })

  it('new secrets are 64 hex characters and differ', () => {
    const a = newSigningSecret()
    expect(a).toMatch(/^[0-9a-f]{64}$/)
    expect(newSigningSecret()).not.toBe(a)
  })
})
