import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FastifyInstance } from 'fastify'
import { createAdjustmentService } from '../../src/http/adjustment-services.js'
import { createLogger } from '../../src/logger.js'
import type { RunMachinery } from '../../src/queue/gateway.js'
import { createFireHandler } from '../../src/schedules/fire.js'
import { submitViaGateway } from '../../src/schedules/submit.js'
import { HistoryStore } from '../../src/storage/histories/history-store.js'
import { ScheduleStore } from '../../src/storage/erp/schedule-store.js'
import { RunStore, runStoreOptions } from '../../src/storage/runs/run-store.js'
import { startService, type ErpMachinery, type TestService } from '../helpers/service.js'
import { waitFor } from '../queue/fixtures.js'

// The operations an integrator asked for, against real Redis, BullMQ and workers:
// runs record their origin and are listed with filters, a schedule is paused (and
// stops firing), and the bulk export of published forecasts matches
// GET /v1/skus/{sku}/forecast row for row, adjustments included.
let service: TestService
let app: FastifyInstance
let gateway: RunMachinery
let erp: ErpMachinery

beforeAll(async () => {
  service = await startService('runs-ops', {
    config: { chunkSize: 5, workerConcurrency: 1, scheduleMinIntervalSeconds: 1 },
    erp: true,
    appDeps: (ctx) => {
      const runs = new RunStore(ctx.redis, runStoreOptions(ctx.config))
      return {
        histories: new HistoryStore(ctx.redis, { prefix: ctx.prefix }),
        adjustments: createAdjustmentService(ctx.config, ctx.redis, { latestForecast: (t, s) => runs.latest(t, s) }),
      }
    },
  })
  ;({ app, gateway } = service)
  erp = service.erp!
})

afterAll(() => service?.close())

const put = (sku: string, demand: number[], tags: string[]) =>
  app.inject({ method: 'PUT', url: `/v1/skus/${sku}/history`, payload: { frequency: 'month', firstPeriod: '2024-01', demand, tags } })
const finished = (runId: string) =>
  waitFor(async () => {
    const r = await gateway.get('default', runId)
    return r && r.status !== 'queued' && r.status !== 'running' ? r : undefined
  }, 60_000, `run ${runId} to finish`)
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms))

interface RunBody {
  id: string
  status: string
  createdAt: string
  origin: { kind: string; scheduleId?: string }
}
const listRuns = async (query = ''): Promise<RunBody[]> => {
  const res = await app.inject({ url: `/v1/runs${query}` })
  expect(res.statusCode).toBe(200)
  return res.json().items
}

describe('runs ops', { timeout: 180_000 }, () => {
  let scheduleId: string
  let inlineRunId: string
  let scopeRunId: string

  beforeAll(async () => {
    // A constant history forecasts its level (100); the other two are merely plausible demand.
    const flat = Array.from({ length: 24 }, () => 100)
    const radiators = Array.from({ length: 24 }, (_, t) => 40 + 25 * Math.cos((2 * Math.PI * t) / 12) + (t % 3))
    expect((await put('LOG-BASKET', flat, ['category:heating'])).statusCode).toBe(201)
    expect((await put('RADIATOR-600', radiators, ['category:heating'])).statusCode).toBe(201)
    expect((await put('HOSE-25M', flat.map((v) => v / 2), ['category:garden'])).statusCode).toBe(201)
  })

  it('a schedule fires runs that record it as their origin; paused, it stops firing and resuming does not catch up', async () => {
    const created = await app.inject({
      method: 'POST',
      url: '/v1/schedules',
      payload: {
        name: 'heating every second',
        cron: '* * * * * *',
        timeZone: 'UTC',
        scope: { tags: ['category:heating'] },
        horizon: 6,
        replenishment: { leadTimePeriods: 2, serviceLevel: 0.95 },
      },
    })
    expect(created.statusCode).toBe(201)
    scheduleId = created.json().id
    expect(created.json().paused).toBe(false)
    await waitFor(async () => {
      const s = (await app.inject({ url: `/v1/schedules/${scheduleId}` })).json()
      return s.firings.submitted >= 1 ? s : undefined
    }, 30_000, 'the schedule to fire')

    const paused = await app.inject({ method: 'PATCH', url: `/v1/schedules/${scheduleId}`, payload: { paused: true } })
    expect(paused.statusCode).toBe(200)
    expect(paused.json()).toMatchObject({ paused: true, nextFireAt: null, name: 'heating every second', horizon: 6 })
    expect(await erp.services.schedules['queue']().getJobScheduler(`default.${scheduleId}`)).toBeUndefined()

    // Let a firing already handed out settle, then nothing more may happen.
    await sleep(1500)
    const before = (await app.inject({ url: `/v1/schedules/${scheduleId}` })).json().firings
    await sleep(2500)
    const after = (await app.inject({ url: `/v1/schedules/${scheduleId}` })).json().firings
    expect(after).toEqual(before)
    // A firing that reaches a worker anyway does nothing.
    const fire = createFireHandler({
      schedules: new ScheduleStore(service.redis, service.prefix),
      getRun: (t, id) => gateway.get(t, id),
      submit: submitViaGateway(gateway),
      removeScheduler: async () => undefined,
      logger: createLogger({ level: 'silent' }),
    })
    expect(await fire({ tenant: 'default', scheduleId })).toEqual({ outcome: 'paused' })
    expect((await app.inject({ url: `/v1/schedules/${scheduleId}` })).json().firings).toEqual(before)
    await finished(before.currentRunId)

    // An edit is checked as a create: a bad pattern is a 400 naming it and changes nothing.
    const bad = await app.inject({ method: 'PATCH', url: `/v1/schedules/${scheduleId}`, payload: { cron: '61 * * * *', horizn: 3 } })
    expect(bad.statusCode).toBe(400)
    expect(bad.json().errors).toEqual([{ path: 'horizn', message: 'is not a field of this request' }])
    const badCron = await app.inject({ method: 'PATCH', url: `/v1/schedules/${scheduleId}`, payload: { cron: '61 * * * *' } })
    expect(badCron.statusCode).toBe(400)
    expect(badCron.json().errors[0].path).toBe('cron')
    const unchanged = (await app.inject({ url: `/v1/schedules/${scheduleId}` })).json()
    expect(unchanged).toMatchObject({ cron: '* * * * * *', paused: true })

    // Resumed on a nightly pattern: the next firing is the next slot after now, none of the missed ones.
    const resumed = await app.inject({ method: 'PATCH', url: `/v1/schedules/${scheduleId}`, payload: { paused: false, cron: '0 2 * * *' } })
    expect(resumed.statusCode).toBe(200)
    expect(resumed.json()).toMatchObject({ paused: false, cron: '0 2 * * *' })
    expect(Date.parse(resumed.json().nextFireAt)).toBeGreaterThan(Date.now())
    expect(await erp.services.schedules['queue']().getJobScheduler(`default.${scheduleId}`)).toMatchObject({ pattern: '0 2 * * *' })
    await sleep(1500)
    expect((await app.inject({ url: `/v1/schedules/${scheduleId}` })).json().firings).toEqual(before)
    // Pause it again so it never fires while the rest of this file runs.
    expect((await app.inject({ method: 'PATCH', url: `/v1/schedules/${scheduleId}`, payload: { paused: true } })).statusCode).toBe(200)
  })

  it('merges a patch one level deep: null removes an optional field, a required one cannot be removed', async () => {
    const patched = await app.inject({ method: 'PATCH', url: `/v1/schedules/${scheduleId}`, payload: { name: null, horizon: 12, rankBy: 'wape' } })
    expect(patched.statusCode).toBe(200)
    expect(patched.json()).toMatchObject({ name: null, horizon: 12, rankBy: 'wape', replenishment: { leadTimePeriods: 2, serviceLevel: 0.95 }, paused: true })
    // RFC 7396's own media type is taken too.
    const reset = (
      await app.inject({
        method: 'PATCH',
        url: `/v1/schedules/${scheduleId}`,
        headers: { 'content-type': 'application/merge-patch+json' },
        payload: JSON.stringify({ rankBy: null, replenishment: null }),
      })
    ).json()
    expect(reset.rankBy).toBe('mase')
    expect(reset).not.toHaveProperty('replenishment')
    const required = await app.inject({ method: 'PATCH', url: `/v1/schedules/${scheduleId}`, payload: { horizon: null } })
    expect(required.statusCode).toBe(400)
    expect(required.json().errors.map((e: { path: string }) => e.path)).toEqual(['horizon'])
    expect((await app.inject({ method: 'PATCH', url: '/v1/schedules/no-such-schedule', payload: { paused: true } })).statusCode).toBe(404)
    const malformed = await app.inject({ method: 'PATCH', url: `/v1/schedules/${scheduleId}`, headers: { 'content-type': 'application/merge-patch+json' }, payload: '{"horizon":' })
    expect(malformed.statusCode).toBe(400)
    const plain = await app.inject({ method: 'PATCH', url: `/v1/schedules/${scheduleId}`, headers: { 'content-type': 'text/plain' }, payload: 'paused' })
    expect(plain.statusCode).toBe(415)
    expect(plain.json().detail).toBe('Send the body as application/json or application/merge-patch+json')
    // Back as the export test expects it.
    const back = await app.inject({ method: 'PATCH', url: `/v1/schedules/${scheduleId}`, payload: { horizon: 6, replenishment: { leadTimePeriods: 2, serviceLevel: 0.95 } } })
    expect(back.statusCode).toBe(200)
  })

  it('lists scheduled, scope and inline runs newest first with their origins, and filters them', async () => {
    const inline = await app.inject({ method: 'POST', url: '/v1/runs', payload: { horizon: 3, series: [{ sku: 'PATIO-HEATER', demand: [5, 7, 6, 8, 7, 9] }] } })
    expect(inline.statusCode).toBe(202)
    inlineRunId = inline.json().id
    expect(inline.json().origin).toEqual({ kind: 'inline' })
    const scope = await app.inject({ method: 'POST', url: '/v1/runs', payload: { horizon: 6, scope: { skus: ['HOSE-25M'] } } })
    expect(scope.statusCode).toBe(202)
    scopeRunId = scope.json().id
    await finished(inlineRunId)
    await finished(scopeRunId)
    expect((await app.inject({ url: `/v1/runs/${scopeRunId}` })).json().origin).toEqual({ kind: 'scope' })

    const firings = (await app.inject({ url: `/v1/schedules/${scheduleId}` })).json().firings
    const all = await listRuns()
    expect(all.map((r) => r.id).slice(0, 2)).toEqual([scopeRunId, inlineRunId])
    const created = all.map((r) => Date.parse(r.createdAt))
    expect(created).toEqual([...created].sort((a, b) => b - a))
    const scheduled = all.filter((r) => r.origin.kind === 'schedule')
    expect(scheduled).toHaveLength(firings.submitted)
    expect(scheduled.every((r) => r.origin.scheduleId === scheduleId)).toBe(true)
    expect(all).toHaveLength(firings.submitted + 2)

    expect((await listRuns('?origin=inline')).map((r) => r.id)).toEqual([inlineRunId])
    expect((await listRuns('?origin=scope&status=succeeded')).map((r) => r.id)).toEqual([scopeRunId])
    expect((await listRuns(`?scheduleId=${scheduleId}`)).map((r) => r.id)).toEqual(scheduled.map((r) => r.id))
    expect(await listRuns('?status=cancelled')).toEqual([])
    const inlineAt = (await app.inject({ url: `/v1/runs/${inlineRunId}` })).json().createdAt
    expect((await listRuns(`?createdTo=${encodeURIComponent(inlineAt)}`)).map((r) => r.id)).toEqual(scheduled.map((r) => r.id))
    expect((await listRuns(`?createdFrom=${encodeURIComponent(inlineAt)}&origin=inline`)).map((r) => r.id)).toEqual([inlineRunId])

    // Paged one at a time, the same runs in the same order.
    const paged: string[] = []
    let cursor: string | null = null
    do {
      const body: { items: RunBody[]; nextCursor: string | null } = (await app.inject({ url: `/v1/runs?limit=1${cursor === null ? '' : `&cursor=${cursor}`}` })).json()
      paged.push(...body.items.map((r) => r.id))
      cursor = body.nextCursor
    } while (cursor !== null)
    expect(paged).toEqual(all.map((r) => r.id))
  })

  it('the bulk export matches GET /v1/skus/{sku}/forecast for every SKU and period, the adjusted one with final = adjusted', async () => {
    const before = (await app.inject({ url: '/v1/skus/LOG-BASKET/forecast' })).json()
    const first = before.forecast[0].period
    const adjusted = await app.inject({
      method: 'POST',
      url: '/v1/skus/LOG-BASKET/adjustments',
      payload: { periods: [first], setDemand: 130, reason: 'stove promotion', author: 'dana' },
    })
    expect(adjusted.statusCode).toBe(200)

    const ndjson = await app.inject({ url: '/v1/forecasts/published?tag=category:heating', headers: { accept: 'application/x-ndjson' } })
    expect(ndjson.statusCode).toBe(200)
    expect(ndjson.headers['content-type']).toMatch(/^application\/x-ndjson/)
    const rows = ndjson.body.trim().split('\n').map((line) => JSON.parse(line))
    expect(new Set(rows.map((r) => r.sku))).toEqual(new Set(['LOG-BASKET', 'RADIATOR-600']))

    for (const sku of ['LOG-BASKET', 'RADIATOR-600']) {
      const f = (await app.inject({ url: `/v1/skus/${sku}/forecast` })).json()
      const mine = rows.filter((r) => r.sku === sku)
      expect(mine.map((r) => r.period)).toEqual(f.forecast.map((p: { period: string }) => p.period))
      f.forecast.forEach((p: { period: string; demand: number; finalDemand: number; adjustment: unknown; intervals: unknown }, i: number) => {
        const at = f.replenishment.periods.find((q: { period: string }) => q.period === p.period)
        expect(mine[i]).toEqual({
          sku,
          frequency: 'month',
          period: p.period,
          demand: p.demand,
          adjustment: p.adjustment,
          finalDemand: p.finalDemand,
          intervals: p.intervals,
          model: f.model,
          runId: f.runId,
          producedAt: f.producedAt,
          replenishment: {
            leadTimePeriods: 2,
            reviewPeriods: f.replenishment.reviewPeriods,
            leadTimeSdPeriods: f.replenishment.leadTimeSdPeriods,
            serviceLevel: 0.95,
            minimumOrder: f.replenishment.minimumOrder,
            packSize: f.replenishment.packSize,
            orderQuantity: f.replenishment.orderQuantity,
            coverDemand: at?.coverDemand ?? null,
            safetyStock: at?.safetyStock ?? null,
            reorderPoint: at?.reorderPoint ?? null,
          },
        })
      })
    }
    const log = rows.find((r) => r.sku === 'LOG-BASKET' && r.period === first)
    // A constant history of 100 forecasts 100; the planner set 130: final = adjusted.
    expect([log.demand, log.finalDemand, log.adjustment.setDemand]).toEqual([100, 130, 130])
    expect(rows.filter((r) => r.sku === 'LOG-BASKET' && r.period !== first).every((r) => r.finalDemand === r.demand && r.adjustment === null)).toBe(true)

    // CSV: the same figures, one row per SKU and period.
    const csv = await app.inject({ url: '/v1/forecasts/published', headers: { accept: 'text/csv' } })
    expect(csv.statusCode).toBe(200)
    expect(csv.headers['content-type']).toMatch(/^text\/csv/)
    const [header, ...lines] = csv.body.trimEnd().split('\r\n')
    const cols = header!.split(',')
    expect(cols.slice(0, 11)).toEqual(['sku', 'frequency', 'period', 'demand', 'setDemand', 'changePercent', 'finalDemand', 'low80', 'high80', 'low95', 'high95'])
    const cells = lines.map((l) => Object.fromEntries(l.split(',').map((v, i) => [cols[i], v])))
    // Every published SKU without a tag filter: the scope run's HOSE-25M too; the inline what-if never.
    expect(new Set(cells.map((c) => c.sku))).toEqual(new Set(['LOG-BASKET', 'RADIATOR-600', 'HOSE-25M']))
    const logRow = cells.find((c) => c.sku === 'LOG-BASKET' && c.period === first)!
    expect([logRow.demand, logRow.setDemand, logRow.changePercent, logRow.finalDemand]).toEqual(['100', '130', '', '130'])
    expect(logRow.runId).toBe(log.runId)
    // Every CSV cell of the heating SKUs is the NDJSON figure written as a number (empty for null).
    const cell = (v: number | null | undefined) => (v === null || v === undefined ? '' : String(v))
    for (const r of rows) {
      const c = cells.find((x) => x.sku === r.sku && x.period === r.period)!
      const iv = (level: number) => r.intervals.find((i: { level: number }) => i.level === level)
      expect([c.demand, c.finalDemand, c.low80, c.high95, c.model, c.producedAt, c.safetyStock, c.reorderPoint, c.orderQuantity]).toEqual([
        cell(r.demand), cell(r.finalDemand), cell(iv(80)?.low), cell(iv(95)?.high), r.model, r.producedAt,
        cell(r.replenishment.safetyStock), cell(r.replenishment.reorderPoint), cell(r.replenishment.orderQuantity),
      ])
    }
    expect(cells.some((c) => c.sku === 'RADIATOR-600' && /^\d+$/.test(c.reorderPoint!))).toBe(true)
    const hose = cells.find((c) => c.sku === 'HOSE-25M')!
    expect([hose.runId, hose.reorderPoint]).toEqual([scopeRunId, ''])

    const weekly = await app.inject({ url: '/v1/forecasts/published?frequency=week', headers: { accept: 'application/x-ndjson' } })
    expect(weekly.body).toBe('')
  })
})
