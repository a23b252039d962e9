import { createHash } from 'node:crypto'
import type { Config } from '../../src/config.js'
import type { RunRequest } from '../../src/schemas/run.js'
import { pageOf } from '../../src/storage/paging.js'
import {
  type LatestForecast,
  type ResultItem,
  type ResultPage,
  type RunGateway,
  type RunListFilter,
  type RunPage,
  type RunRecord,
} from '../../src/runs/contract.js'

/**
 * TEST DOUBLE of the run machinery: keeps runs in a Map, never forecasts.
 * Tests put results in with `complete()`. Tenant scoping behaves like the
 * real gateway (another tenant's run is null).
 */
export class InMemoryGatewayDouble implements RunGateway {
  readonly runs = new Map<string, RunRecord>()
  readonly items = new Map<string, ResultItem[]>()
  readonly latest = new Map<string, LatestForecast>()
  readonly submitted: { tenant: string; request: RunRequest }[] = []
  /** The filters listRuns was called with. */
  readonly listed: { tenant: string; filter: RunListFilter }[] = []
  pingError: Error | null = null
  statsCalls = 0
  private next = 1

  async submit(tenant: string, request: RunRequest): Promise<RunRecord> {
    const { series, ...settings } = request
    const id = `run-${this.next++}`
    const run: RunRecord = {
      id,
      tenant,
      status: 'queued',
      progress: { total: series.length, done: 0, failed: 0 },
      createdAt: '2026-01-05T08:00:00.000Z',
      startedAt: null,
      finishedAt: null,
      settings,
      scope: null,
      origin: { kind: 'inline' },
      summary: null,
      failure: null,
    }
    this.submitted.push({ tenant, request })
    this.runs.set(id, run)
    return run
  }

  /** Finish a run with the given items (what a worker would store). */
  complete(runId: string, items: ResultItem[]): void {
    const run = this.runs.get(runId)!
    const failed = items.filter((i) => 'failure' in i).length
    this.runs.set(runId, {
      ...run,
      status: 'succeeded',
      progress: { total: items.length, done: items.length, failed },
      startedAt: '2026-01-05T08:00:01.000Z',
      finishedAt: '2026-01-05T08:00:02.000Z',
      summary: { rankBy: 'mase', modelCounts: { 'last-value': items.length - failed }, meanHoldoutError: 0.5 },
    })
    this.items.set(runId, items)
    for (const item of items) {
      if (!('failure' in item)) {
        this.latest.set(`${run.tenant}\u0000${item.sku}`, { runId, producedAt: '2026-01-05T08:00:02.000Z', item })
      }
    }
  }

  async get(tenant: string, runId: string): Promise<RunRecord | null> {
    const run = this.runs.get(runId)
    return run && run.tenant === tenant ? run : null
  }

  async results(tenant: string, runId: string, page: { limit: number; cursor?: string; sku?: string }): Promise<ResultPage | null> {
    if (!(await this.get(tenant, runId))) return null
    let items = this.items.get(runId) ?? []
    if (page.sku !== undefined) items = items.filter((i) => i.sku === page.sku)
    return pageOf(items, (i) => i.sku, page.limit, page.cursor)
  }

  async cancel(tenant: string, runId: string): Promise<RunRecord | null> {
    const run = await this.get(tenant, runId)
    if (!run) return null
    if (run.status !== 'queued' && run.status !== 'running') return run
    const cancelled: RunRecord = { ...run, status: 'cancelled', finishedAt: '2026-01-05T08:00:03.000Z' }
    this.runs.set(runId, cancelled)
    return cancelled
  }

  /** The tenant's runs, last submitted first, filtered by status and origin only (the real filtering is tested against Redis). */
  async listRuns(tenant: string, filter: RunListFilter, page: { limit: number; cursor?: string }): Promise<RunPage> {
    this.listed.push({ tenant, filter })
    const runs = [...this.runs.values()]
      .filter((r) => r.tenant === tenant && (filter.status === undefined || r.status === filter.status))
      .filter((r) => filter.origin === undefined || r.origin.kind === filter.origin)
      .reverse()
    return pageOf(runs, (r) => r.id, page.limit, page.cursor)
  }

  /** The whole scan in one step (the real one pages with HSCAN). */
  async scanPublished(tenant: string, _cursor: string, _count: number): Promise<{ forecasts: LatestForecast[]; cursor: string }> {
    const forecasts = [...this.latest].filter(([key]) => key.startsWith(`${tenant}\u0000`)).map(([, f]) => f)
    return { forecasts, cursor: '0' }
  }

  async publishedOf(tenant: string, skus: readonly string[]): Promise<(LatestForecast | null)[]> {
    return skus.map((sku) => this.latest.get(`${tenant}\u0000${sku}`) ?? null)
  }

  async latestForecast(tenant: string, sku: string): Promise<LatestForecast | null> {
    return this.latest.get(`${tenant}\u0000${sku}`) ?? null
  }

  async ping(): Promise<void> {
    if (this.pingError) throw this.pingError
  }

  async stats() {
    this.statsCalls++
    return { waiting: 3, active: 1, delayed: 0, failed: 2 }
  }
}

export const sha256 = (s: string) => createHash('sha256').update(s, 'utf8').digest('hex')

export const KEY_GARDEN = 'garden-key-0123456789abcdef'
export const KEY_HEATING = 'heating-key-0123456789abcdef'

/** A plain config object, as tests pass it (no env, no files). */
export function testConfig(overrides: Partial<Config> = {}): Config {
  return {
    port: 0,
    host: '127.0.0.1',
    redisUrl: 'redis://127.0.0.1:6379',
    redisPrefix: 'almanac-test',
    apiKeys: new Map([
      ['garden', [sha256(KEY_GARDEN)]],
      ['heating', [sha256(KEY_HEATING)]],
    ]),
    chunkSize: 500,
    workerConcurrency: 1,
    runWorker: false,
    resultRetentionSeconds: 3600,
    bodyLimitBytes: 1024 * 1024,
    syncMaxSeries: 5,
    rateLimitMax: 1000,
    rateLimitWindowMs: 60_000,
    logLevel: 'silent',
    ...overrides,
  }
}

export const auth = (key: string) => ({ authorization: `Bearer ${key}` })

/** A successful item as a worker would store it (shape only; values invented). */
export function forecastItemFixture(sku: string): ResultItem {
  return {
    sku,
    frequency: 'month',
    model: 'last-value',
    family: 'level',
    params: {},
    modelChoice: { method: 'holdout', rankBy: 'mase', holdoutPeriods: 3, holdoutOrigins: 1 },
    holdoutErrors: { mae: 1, rmse: 1, mape: 10, smape: 10, mase: 0.5, wape: 10 },
    candidates: [{ model: 'last-value', family: 'level', status: 'scored', score: 0.5 }],
    forecast: [{ period: '2026-01', demand: 10, intervals: [{ level: 80, low: 8, high: 12 }, { level: 95, low: 7, high: 13 }] }],
    intervalMethod: 'empirical',
    warnings: [],
  }
}
