import { describe, expect, it } from 'vitest'
import { EXPORT_BATCH, publishedCsvHeader, publishedCsvRow, publishedSource, publishedText } from '../../src/http/published-export.js'
import { publishedRows, type PublishedRow, type PublishedSource } from '../../src/runs/published-export.js'
import type { Adjustment } from '../../src/runs/adjustments.js'
import type { ForecastItem, LatestForecast } from '../../src/runs/contract.js'
import { forecastItemFixture } from './gateway-double.js'

const latest = (sku: string, extra: Partial<ForecastItem> = {}): LatestForecast => ({
  runId: 'run-7',
  producedAt: '2026-03-02T02:00:05.000Z',
  item: { ...(forecastItemFixture(sku) as ForecastItem), ...extra },
})

const twoPoints = {
  forecast: [
    { period: '2026-04', demand: 40, intervals: [{ level: 80, low: 30, high: 50 }, { level: 95, low: 25, high: 55 }] },
    { period: '2026-05', demand: -2.5, intervals: [{ level: 80, low: -5, high: 0 }] },
  ],
}

const adjustment = (period: string, change: Adjustment['change']): Adjustment => ({
  period, change, reason: 'spring promotion', author: 'dana', setAt: '2026-03-02T09:00:00.000Z', runId: 'run-7',
})

async function collect<T>(it: AsyncIterable<T>): Promise<T[]> {
  const out: T[] = []
  for await (const x of it) out.push(x)
  return out
}

describe('published rows', () => {
  it('apply the adjustment in force per period (finalDemand), keep the statistical demand, and filter by frequency', async () => {
    const source: PublishedSource = {
      batches: async function* () {
        yield [latest('GLOVE-L', twoPoints), latest('SEED-MIX', { frequency: 'week' }), { runId: 'r', producedAt: 'x', item: { sku: 'BAD', frequency: 'month', failure: { code: 'c', message: 'm' } } }]
      },
      inForce: async (skus) => skus.map((sku) => (sku === 'GLOVE-L' ? new Map([['2026-04', adjustment('2026-04', { changePercent: -15 })]]) : new Map())),
    }
    const [batch] = await collect(publishedRows(source, { frequency: 'month' }))
    // 40 lowered by 15 %: 40 * 0.85 = 34.
    expect(batch!.map((r) => [r.sku, r.period, r.demand, r.finalDemand, r.adjustment?.reason ?? null])).toEqual([
      ['GLOVE-L', '2026-04', 40, 34, 'spring promotion'],
      ['GLOVE-L', '2026-05', -2.5, -2.5, null],
    ])
    expect(batch![0]).toMatchObject({ frequency: 'month', model: 'last-value', runId: 'run-7', producedAt: '2026-03-02T02:00:05.000Z' })
    expect(batch![0]).not.toHaveProperty('replenishment')
  })
})

describe('published CSV and NDJSON', () => {
  const row: PublishedRow = {
    sku: '=HYPERLINK("x")', frequency: 'month', period: '2026-05', demand: -2.5,
    adjustment: { setDemand: 3, reason: 'r', author: 'a', setAt: 's' }, finalDemand: 3,
    intervals: [{ level: 80, low: -5, high: 0 }], model: 'last-value', runId: 'run-7', producedAt: '2026-03-02T02:00:05.000Z',
  }

  it('writes a header with the requested levels and the replenishment columns', () => {
    expect(publishedCsvHeader([80, 95])).toBe(
      'sku,frequency,period,demand,setDemand,changePercent,finalDemand,low80,high80,low95,high95,model,runId,producedAt,' +
        'leadTimePeriods,reviewPeriods,leadTimeSdPeriods,serviceLevel,coverDemand,safetyStock,reorderPoint,orderQuantity,minimumOrder,packSize\r\n',
    )
  })

  it('neutralises a formula-like SKU as the results CSV does, keeps negative numbers, leaves missing figures empty', () => {
    expect(publishedCsvRow(row, [80, 95])).toBe(
      `"'=HYPERLINK(""x"")",month,2026-05,-2.5,3,,3,-5,0,,,last-value,run-7,2026-03-02T02:00:05.000Z,,,,,,,,,,\r\n`,
    )
    const withStock: PublishedRow = {
      ...row, sku: 'GLOVE-L', adjustment: null, finalDemand: -2.5,
      replenishment: { leadTimePeriods: 2, reviewPeriods: 0, leadTimeSdPeriods: 0, serviceLevel: 0.95, minimumOrder: 0, packSize: 12, orderQuantity: 24, coverDemand: null, safetyStock: 7, reorderPoint: null },
    }
    expect(publishedCsvRow(withStock, [80])).toBe('GLOVE-L,month,2026-05,-2.5,,,-2.5,-5,0,last-value,run-7,2026-03-02T02:00:05.000Z,2,0,0,0.95,,7,,24,0,12\r\n')
  })

  it('writes the dialect asked for: semicolons and decimal commas, or tabs', async () => {
    const withStock: PublishedRow = {
      ...row, sku: 'GLOVE-L', adjustment: null, finalDemand: -2.5,
      replenishment: { leadTimePeriods: 2, reviewPeriods: 0, leadTimeSdPeriods: 0, serviceLevel: 0.95, minimumOrder: 0, packSize: 12, orderQuantity: 24, coverDemand: null, safetyStock: 7.5, reorderPoint: null },
    }
    const euro = { delimiter: 'semicolon', decimalSeparator: 'comma' } as const
    expect(publishedCsvRow(withStock, [80], euro)).toBe('GLOVE-L;month;2026-05;-2,5;;;-2,5;-5;0;last-value;run-7;2026-03-02T02:00:05.000Z;2;0;0;0,95;;7,5;;24;0;12\r\n')
    expect(publishedCsvHeader([80], euro)).toMatch(/^sku;frequency;period;demand;setDemand;changePercent;finalDemand;low80;high80;model;/)
    async function* rows() {
      yield [withStock]
    }
    const tabbed = (await collect(publishedText(rows(), { kind: 'csv', levels: [80], dialect: { delimiter: 'tab', decimalSeparator: 'point' } }))).join('')
    expect(tabbed.split('\r\n')[1]).toBe('GLOVE-L\tmonth\t2026-05\t-2.5\t\t\t-2.5\t-5\t0\tlast-value\trun-7\t2026-03-02T02:00:05.000Z\t2\t0\t0\t0.95\t\t7.5\t\t24\t0\t12')
  })

  it('streams NDJSON one row per line, nothing for no rows', async () => {
    async function* rows() {
      yield [row]
      yield []
      yield [{ ...row, period: '2026-06' }]
    }
    const text = (await collect(publishedText(rows(), { kind: 'ndjson' }))).join('')
    expect(text.split('\n').filter(Boolean).map((l) => JSON.parse(l).period)).toEqual(['2026-05', '2026-06'])
    expect(await collect(publishedText((async function* () {})(), { kind: 'ndjson' }))).toEqual([])
  })
})

describe('published source', () => {
  it('scans the latest records to the end, each SKU once although HSCAN may repeat one', async () => {
    const steps: Record<string, { forecasts: LatestForecast[]; cursor: string }> = {
      '0': { forecasts: [latest('A'), latest('B')], cursor: '17' },
      '17': { forecasts: [latest('B'), latest('C')], cursor: '4' },
      '4': { forecasts: [], cursor: '0' },
    }
    const asked: string[] = []
    const source = publishedSource(
      {
        gateway: {
          scanPublished: async (_t, cursor, count) => {
            asked.push(cursor)
            expect(count).toBe(EXPORT_BATCH)
            return steps[cursor]!
          },
          publishedOf: async () => {
            throw new Error('not used without a tag')
          },
        },
        histories: null,
        adjustments: null,
      },
      'garden',
      undefined,
    )
    const batches = await collect(source.batches())
    expect(batches.map((b) => b.map((f) => f.item.sku))).toEqual([['A', 'B'], ['C']])
    expect(asked).toEqual(['0', '17', '4'])
    expect(await source.inForce(['A', 'B'])).toEqual([new Map(), new Map()])
  })

  it('with a tag, pages through the SKUs carrying it and leaves out those without a published forecast', async () => {
    const pages: Record<string, { items: { sku: string }[]; nextCursor: string | null }> = {
      start: { items: [{ sku: 'A' }, { sku: 'B' }], nextCursor: 'c1' },
      c1: { items: [{ sku: 'C' }], nextCursor: null },
    }
    const source = publishedSource(
      {
        gateway: {
          scanPublished: async () => {
            throw new Error('not used with a tag')
          },
          publishedOf: async (_t, skus) => skus.map((sku) => (sku === 'B' ? null : latest(sku))),
        },
        histories: {
          list: (async (_t: string, page: { tag?: string; cursor?: string }) => {
            expect(page.tag).toBe('category:garden')
            return pages[page.cursor ?? 'start']!
          }) as never,
        },
        adjustments: { inForceMany: async (_t, skus) => skus.map(() => new Map([['2026-01', adjustment('2026-01', { setDemand: 1 })]])) },
      },
      'garden',
      'category:garden',
    )
    expect((await collect(source.batches())).map((b) => b.map((f) => f.item.sku))).toEqual([['A'], ['C']])
    expect((await source.inForce(['A']))[0]!.get('2026-01')?.author).toBe('dana')
  })
})
