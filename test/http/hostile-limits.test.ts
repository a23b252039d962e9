import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connect, type Socket } from 'node:net'
import type { FastifyInstance } from 'fastify'
import { ConfigError, loadConfig } from '../../src/config.js'
import { build } from '../../src/http/app.js'
import { InMemoryGatewayDouble, KEY_GARDEN, testConfig } from './gateway-double.js'
import { buildHostileApp, type HostileApp } from './hostile-helpers.js'

/**
 * Limits that only show on a real socket: bodies over the limit are refused
 * before they are read whole, slow clients are cut off, and the rate limit
 * says when to come back. The app listens on 127.0.0.1; requests are written
 * by hand so the test controls every byte and every pause.
 */

const LIMIT = 64 * 1024
const REQUEST_TIMEOUT_MS = 1500
let h: HostileApp
let app: FastifyInstance
let port: number

beforeAll(async () => {
  // Real Redis stores behind the app, so streamed history uploads are read for real.
  h = await buildHostileApp('hostile-limits', { bodyLimitBytes: LIMIT, requestTimeoutMs: REQUEST_TIMEOUT_MS })
  app = h.app
  await app.listen({ port: 0, host: '127.0.0.1' })
  port = (app.server.address() as { port: number }).port
})

const sockets: Socket[] = []

afterAll(async () => {
  for (const s of sockets) s.destroy()
  await h?.close()
})

interface Exchange {
  readonly socket: Socket
  /** Resolves with everything the server sent once it closes the connection or `settleMs` passes after a response. */
  readonly response: Promise<string>
  /** True once the server has sent anything. */
  answered(): boolean
}

function open(): Promise<Exchange> {
  return new Promise((resolve, reject) => {
    const socket = connect(port, '127.0.0.1')
    sockets.push(socket)
    let received = ''
    const response = new Promise<string>((done) => {
      socket.on('data', (d) => (received += d.toString('latin1')))
      socket.on('close', () => done(received))
      socket.on('error', () => done(received))
    })
    socket.once('connect', () => resolve({ socket, response, answered: () => received.length > 0 }))
    socket.once('error', reject)
  })
}

const statusOf = (raw: string) => Number(/^HTTP\/1\.1 (\d{3})/.exec(raw)?.[1])
const bodyOf = (raw: string) => raw.slice(raw.indexOf('\r\n\r\n') + 4)
const head = (extra: string) =>
  `POST /v1/runs HTTP/1.1\r\nHost: 127.0.0.1\r\nAuthorization: Bearer ${KEY_GARDEN}\r\nContent-Type: application/json\r\n${extra}\r\n`
const pause = (ms: number) => new Promise((r) => setTimeout(r, ms))

describe('request limits on a real socket', () => {
  it('a Content-Length over the limit is 413 before the body is sent', async () => {
    const x = await open()
    x.socket.write(head(`Content-Length: ${LIMIT * 100}\r\nConnection: close\r\n`))
    x.socket.write('{"horizon": 3, "series": [')
    const raw = await x.response
    expect(statusOf(raw)).toBe(413)
    expect(raw).toMatch(/content-type: application\/problem\+json/i)
    expect(JSON.parse(bodyOf(raw))).toMatchObject({ status: 413, title: 'Payload too large' })
  })

  it('a chunked body (no Content-Length) over the limit is 413', async () => {
    const x = await open()
    x.socket.write(head('Transfer-Encoding: chunked\r\nConnection: close\r\n'))
    const piece = `${'1,'.repeat(4000)}`
    const chunk = (text: string) => `${Buffer.byteLength(text).toString(16)}\r\n${text}\r\n`
    let sent = 0
    x.socket.write(chunk('{"horizon": 3, "series": [{"sku": "A", "demand": ['))
    while (sent < LIMIT + 16 * 1024) {
      x.socket.write(chunk(piece))
      sent += piece.length
    }
    x.socket.write(chunk('1]}]}') + '0\r\n\r\n')
    const raw = await x.response
    expect(statusOf(raw)).toBe(413)
    expect(JSON.parse(bodyOf(raw).replace(/^[0-9a-f]+\r\n/, '').replace(/\r\n0\r\n\r\n$/, ''))).toMatchObject({ status: 413 })
  })

  it('an endless chunked body is cut off near the limit, not read to its end', async () => {
    const x = await open()
    x.socket.write(head('Transfer-Encoding: chunked\r\nConnection: close\r\n'))
    const piece = `[${'1,'.repeat(4000)}1]`
    let sent = 0
    // 100x the limit if the server read it all.
    while (sent < LIMIT * 100 && !x.answered() && !x.socket.destroyed) {
      const flushed = x.socket.write(`${piece.length.toString(16)}\r\n${piece}\r\n`)
      sent += piece.length
      await pause(flushed ? 1 : 10)
    }
    const raw = await x.response
    // The 413 may be lost to the reset the client provokes by writing on; the connection is closed either way.
    if (raw !== '') expect(statusOf(raw)).toBe(413)
    expect(sent).toBeLessThan(LIMIT * 20)
  })

  it('a streamed upload (CSV, NDJSON) declaring a Content-Length over the limit is 413 at once', async () => {
    for (const type of ['text/csv', 'application/x-ndjson']) {
      const x = await open()
      const started = Date.now()
      x.socket.write(
        `POST /v1/history HTTP/1.1\r\nHost: 127.0.0.1\r\nAuthorization: Bearer ${KEY_GARDEN}\r\n` +
          `Content-Type: ${type}\r\nContent-Length: ${LIMIT * 100}\r\nConnection: close\r\n\r\nsku,period,demand\n`,
      )
      const raw = await x.response
      expect(statusOf(raw), type).toBe(413)
      expect(Date.now() - started, type).toBeLessThan(REQUEST_TIMEOUT_MS)
    }
  })

  it('a streamed CSV upload sent chunked is cut off with 413 past the limit', async () => {
    const x = await open()
    x.socket.write(
      `POST /v1/history HTTP/1.1\r\nHost: 127.0.0.1\r\nAuthorization: Bearer ${KEY_GARDEN}\r\n` +
        'Content-Type: text/csv\r\nTransfer-Encoding: chunked\r\nConnection: close\r\n\r\n',
    )
    const rows = 'sku,period,demand\n' + 'SPADE,2024-01,1\n'.repeat(1000)
    let sent = 0
    while (sent < LIMIT * 100 && !x.answered() && !x.socket.destroyed) {
      const flushed = x.socket.write(`${rows.length.toString(16)}\r\n${rows}\r\n`)
      sent += rows.length
      await pause(flushed ? 1 : 10)
    }
    const raw = await x.response
    if (raw !== '') expect(statusOf(raw)).toBe(413)
    expect(sent).toBeLessThan(LIMIT * 20)
  })

  it('a client that trickles its body is answered 408 and cut off after the request timeout', async () => {
    const x = await open()
    const started = Date.now()
    x.socket.write(head('Content-Length: 1000\r\n'))
    // One byte every 100 ms keeps the socket busy, so only the request timeout can stop it.
    const trickle = setInterval(() => {
      if (!x.socket.destroyed) x.socket.write(' ')
    }, 100)
    const raw = await x.response
    clearInterval(trickle)
    const took = Date.now() - started
    expect(statusOf(raw)).toBe(408)
    expect(took).toBeGreaterThanOrEqual(REQUEST_TIMEOUT_MS - 100)
    expect(took).toBeLessThan(REQUEST_TIMEOUT_MS * 4)
  })

  it('a client that sends half its headers and stops is cut off too', async () => {
    const x = await open()
    const started = Date.now()
    x.socket.write('GET /v1/runs/run-1 HTTP/1.1\r\nHost: 127.0.0.1\r\n')
    await x.response
    expect(Date.now() - started).toBeLessThan(REQUEST_TIMEOUT_MS * 4)
  })

  it('the rate limit answers 429 with Retry-After over the wire', async () => {
    const limited = await build({ config: testConfig({ rateLimitMax: 5 }), gateway: new InMemoryGatewayDouble() })
    await limited.listen({ port: 0, host: '127.0.0.1' })
    const limitedPort = (limited.server.address() as { port: number }).port
    let last: Response | undefined
    for (let i = 0; i < 6; i++) {
      last = await fetch(`http://127.0.0.1:${limitedPort}/v1/runs/run-1`, { headers: { authorization: `Bearer ${KEY_GARDEN}` } })
      await last.arrayBuffer()
    }
    await limited.close()
    expect(last!.status).toBe(429)
    expect(Number(last!.headers.get('retry-after'))).toBeGreaterThan(0)
    expect(last!.headers.get('content-type')).toMatch(/^application\/problem\+json/)
  })

  it('REQUEST_TIMEOUT_MS defaults to 120 s and refuses values under 1 s', () => {
    const deps = { readFile: () => '', hash: (k: string) => k }
    expect(loadConfig({}, deps).requestTimeoutMs).toBe(120_000)
    expect(loadConfig({ REQUEST_TIMEOUT_MS: '5000' }, deps).requestTimeoutMs).toBe(5000)
    expect(() => loadConfig({ REQUEST_TIMEOUT_MS: '500' }, deps)).toThrow(ConfigError)
  })
})
