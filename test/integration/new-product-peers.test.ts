import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import { HistoryStore } from '../../src/storage/histories/history-store.js'
import { startService, type TestService } from '../helpers/service.js'
import { waitFor } from '../queue/fixtures.js'

/**
 * newProductPeers over stored histories (issue 12): a garden planter launched four months ago
 * is blended with the level of the garden SKUs that have a history of their own. The peers are
 * constant, so their recent levels are 80, 100 and 120 and the median 100 by hand; the planter's
 * own forecast comes from the same run without the option. Invented data of the distributor.
 */
let service: TestService
let app: FastifyInstance

beforeAll(async () => {
  service = await startService('new-product-peers', {
    config: { chunkSize: 2, workerConcurrency: 1 },
    appDeps: ({ redis, prefix }) => ({ histories: new HistoryStore(redis, { prefix }) }),
  })
  app = service.app
}, 60_000)
afterAll(() => service?.close())

const put = (sku: string, demand: number[], tags: string[], firstPeriod = '2024-01') =>
  app.inject({ method: 'PUT', url: `/v1/skus/${sku}/history`, payload: { frequency: 'month', firstPeriod, demand, tags } })

async function runAndRead(body: object, sku: string) {
  const res = await app.inject({ method: 'POST', url: '/v1/runs', payload: { horizon: 3, publish: false, scope: { all: true }, ...body } })
  expect(res.statusCode).toBe(202)
  const id = res.json().id as string
  await waitFor(async () => {
    const r = await service.gateway.get('default', id)
    return r?.status === 'succeeded' ? r : undefined
  }, 60_000, 'the run')
  return (await app.inject({ url: `/v1/runs/${id}/results?sku=${sku}` })).json().items[0]
}

describe('new products and their peers', { timeout: 120_000 }, () => {
  beforeAll(async () => {
    const flat = (level: number) => Array.from({ length: 24 }, () => level)
    for (const [sku, level] of [['RAKE-1', 80], ['RAKE-2', 100], ['RAKE-3', 120]] as const) {
      expect((await put(sku, flat(level), ['category:garden'])).statusCode).toBe(201)
    }
    // Heating SKUs are not its peers; another garden new product is not a peer either (too short).
    expect((await put('STOVE-1', flat(500), ['category:heating'])).statusCode).toBe(201)
    expect((await put('HOE-NEW', [30, 31], ['category:garden'], '2025-11')).statusCode).toBe(201)
    expect((await put('PLANTER-NEW', [10, 12, 11, 13], ['kind:new-product', 'category:garden'], '2025-09')).statusCode).toBe(201)
  })

  it('blends a new product with the median recent level of its tag: 0.4 x own + 0.6 x 100', async () => {
    const alone = await runAndRead({}, 'PLANTER-NEW')
    const blended = await runAndRead({ newProductPeers: { tagPrefix: 'category:' } }, 'PLANTER-NEW')
    expect(blended.forecast.map((p: { period: string }) => p.period)).toEqual(alone.forecast.map((p: { period: string }) => p.period))
    // Served figures keep 7 significant digits (the stored item format): compared to 3 decimals.
    blended.forecast.forEach((p: { demand: number }, i: number) => expect(p.demand).toBeCloseTo(0.4 * alone.forecast[i].demand + 60, 3))
    expect(blended.warnings).toContainEqual(
      expect.objectContaining({ code: 'peer-level-blended', message: expect.stringContaining('the level of 3 SKUs tagged category:garden (median recent demand 100)') }),
    )
    // SKUs with a history of their own are forecast as before.
    const rake = await runAndRead({ newProductPeers: { tagPrefix: 'category:' } }, 'RAKE-2')
    expect(rake.warnings.map((w: { code: string }) => w.code)).not.toContain('peer-level-blended')
  })

  it('leaves a new product alone when its tag has fewer than 3 peers, and refuses the option for inline series', async () => {
    const none = await runAndRead({ newProductPeers: { tagPrefix: 'kind:' } }, 'PLANTER-NEW')
    expect(none.warnings.map((w: { code: string }) => w.code)).not.toContain('peer-level-blended')
    const inline = await app.inject({
      method: 'POST',
      url: '/v1/runs',
      payload: { horizon: 3, newProductPeers: { tagPrefix: 'category:' }, series: [{ sku: 'X', demand: [1, 2] }] },
    })
    expect(inline.statusCode).toBe(400)
    expect(inline.json().errors.map((e: { path: string }) => e.path)).toEqual(['newProductPeers'])
  })
})
