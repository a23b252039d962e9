import { createServer, type IncomingHttpHeaders, type Server } from 'node:http'
import type { AddressInfo } from 'node:net'

/**
 * TEST DOUBLE of a callback receiver on 127.0.0.1: records every request and
 * answers with the status `respond` returns for it.
 */
export interface Received {
  readonly path: string
  readonly headers: IncomingHttpHeaders
  readonly body: string
}

export async function startReceiver(respond: (req: Received, nth: number) => number): Promise<{
  url: string
  received: Received[]
  close(): Promise<void>
}> {
  const received: Received[] = []
  const server: Server = createServer((req, res) => {
    const chunks: Buffer[] = []
    req.on('data', (c: Buffer) => chunks.push(c))
    req.on('end', () => {
      const r = { path: req.url ?? '', headers: req.headers, body: Buffer.concat(chunks).toString('utf8') }
      received.push(r)
      const nth = received.filter((x) => x.path === r.path).length
      res.statusCode = respond(r, nth)
      res.end()
    })
  })
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve))
  const { port } = server.address() as AddressInfo
  return {
    url: `http://127.0.0.1:${port}`,
    received,
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  }
}

/** A loopback URL where nothing listens (a port just released). */
export async function deadUrl(): Promise<string> {
  const r = await startReceiver(() => 200)
  await r.close()
  return r.url
}
