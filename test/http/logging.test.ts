import { describe, expect, it } from 'vitest'
import { build } from '../../src/http/app.js'
import { createLogger } from '../../src/logger.js'
import { InMemoryGatewayDouble, KEY_GARDEN, auth, testConfig } from './gateway-double.js'

function capture() {
  const lines: string[] = []
  const logger = createLogger({ level: 'info', destination: { write: (s: string) => void lines.push(s) } })
  return { logger, lines, parsed: () => lines.map((l) => JSON.parse(l) as Record<string, unknown>) }
}

describe('logging', () => {
  it('JSON lines with request id, tenant and run id; the API key never appears', async () => {
    const { logger, lines, parsed } = capture()
    const app = await build({ config: testConfig(), gateway: new InMemoryGatewayDouble(), logger })
    const res = await app.inject({
      method: 'POST',
      url: '/v1/runs',
      headers: { ...auth(KEY_GARDEN), 'x-request-id': 'client-req-42' },
      payload: { horizon: 1, series: [{ sku: 'SPADE', demand: [1, 2] }] },
    })
    await app.close()
    expect(res.statusCode).toBe(202)
    expect(res.headers['x-request-id']).toBe('client-req-42')
    const submitted = parsed().find((l) => l.msg === 'run submitted')
    expect(submitted).toMatchObject({ reqId: 'client-req-42', tenant: 'garden', runId: res.json().id, series: 1 })
    const completed = parsed().find((l) => l.msg === 'request completed')
    expect(completed).toMatchObject({ reqId: 'client-req-42', tenant: 'garden', res: { statusCode: 202 } })
    expect(lines.join('\n')).not.toContain(KEY_GARDEN)
  })

  it('replaces an unsafe client request id with a fresh one', async () => {
    const app = await build({ config: testConfig(), gateway: new InMemoryGatewayDouble() })
    const res = await app.inject({ url: '/healthz', headers: { 'x-request-id': 'bad id\nforged line' } })
    await app.close()
    expect(res.headers['x-request-id']).toMatch(/^[0-9a-f-]{36}$/)
  })

  it('redacts authorization headers wherever a request object is logged', () => {
    const { logger, lines } = capture()
    logger.info({ req: { headers: { authorization: `Bearer ${KEY_GARDEN}`, host: 'x' } } }, 'incoming')
    expect(lines[0]).not.toContain(KEY_GARDEN)
    expect(JSON.parse(lines[0]!).req.headers).toEqual({ authorization: '[redacted]', host: 'x' })
  })
})
