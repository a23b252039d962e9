/**
 * Puts the invented demo data (run-request.json: a regional distributor of garden,
 * heating and workwear supplies) into a running service for the workbench: uploads
 * the histories with tags, submits a run over them and waits for it to finish.
 * Used by the browser tests, `npm run screenshots` and `npm run bench:workbench`.
 */
import { readFileSync } from 'node:fs'

interface DemoSeries {
  readonly sku: string
  readonly firstPeriod: string
  readonly demand: readonly (number | null)[]
}

const CATEGORIES: Record<string, string> = { GRD: 'category:garden', HTG: 'category:heating', WRK: 'category:workwear' }

/** The demo series, all ~300 or the named ones (in the order named). */
export function demoSeries(skus?: readonly string[]): DemoSeries[] {
  const body = JSON.parse(readFileSync(new URL('./run-request.json', import.meta.url), 'utf8')) as { series: DemoSeries[] }
  if (!skus) return body.series
  return skus.map((sku) => {
    const s = body.series.find((x) => x.sku === sku)
    if (!s) throw new Error(`no demo series ${sku}`)
    return s
  })
}

/** category:<garden|heating|workwear>, plus kind:slow-mover (*-7xxx) or kind:new-product (*-8xxx). */
export function demoTags(sku: string): string[] {
  const tags = [CATEGORIES[sku.slice(0, 3)] ?? 'category:other']
  if (/-7\d{3}$/.test(sku)) tags.push('kind:slow-mover')
  if (/-8\d{3}$/.test(sku)) tags.push('kind:new-product')
  return tags
}

/** A small mix: seasonal garden and heating items, steady workwear, slow movers and a new product. */
export const SMALL_DEMO_SKUS = [
  'GRD-1001', 'GRD-1002', 'GRD-1003', 'HTG-2001', 'HTG-2002', 'WRK-3001', 'WRK-3002',
  'GRD-7001', 'HTG-7002', 'WRK-7003', 'GRD-8001',
] as const

/** The run settings the demo uses (monthly, six months ahead, 80% and 95% bands, replenishment). */
export const DEMO_RUN_SETTINGS = {
  horizon: 6,
  frequency: 'month',
  intervalLevels: [80, 95],
  rankBy: 'mase',
  replenishment: { leadTimePeriods: 2, serviceLevel: 0.95 },
} as const

export interface DemoRun {
  readonly id: string
  readonly status: string
  readonly progress: { readonly total: number; readonly done: number; readonly failed: number }
}

async function call<T>(baseUrl: string, path: string, init: RequestInit, headers: Record<string, string>): Promise<T> {
  const response = await fetch(`${baseUrl}${path}`, { ...init, headers: { 'content-type': 'application/json', ...headers } })
  const text = await response.text()
  if (!response.ok) throw new Error(`${init.method ?? 'GET'} ${path} answered ${response.status}: ${text.slice(0, 500)}`)
  return JSON.parse(text) as T
}

/** Uploads the series as stored histories (whole-history replace) with their tags. */
export async function uploadDemo(baseUrl: string, series: readonly DemoSeries[], headers: Record<string, string> = {}): Promise<void> {
  const body = {
    mode: 'replace',
    series: series.map((s) => ({ sku: s.sku, frequency: 'month', firstPeriod: s.firstPeriod, demand: s.demand, tags: demoTags(s.sku) })),
  }
  await call(baseUrl, '/v1/history?frequency=month', { method: 'POST', body: JSON.stringify(body) }, headers)
}

/** Submits a run over the stored SKUs named and resolves when it has finished. */
export async function runDemo(
  baseUrl: string,
  skus: readonly string[],
  headers: Record<string, string> = {},
  timeoutMs = 120_000,
): Promise<DemoRun> {
  const submitted = await call<DemoRun>(
    baseUrl,
    '/v1/runs',
    { method: 'POST', body: JSON.stringify({ ...DEMO_RUN_SETTINGS, scope: { skus } }) },
    headers,
  )
  const deadline = Date.now() + timeoutMs
  for (;;) {
    const run = await call<DemoRun>(baseUrl, `/v1/runs/${submitted.id}`, {}, headers)
    if (run.status !== 'queued' && run.status !== 'running') return run
    if (Date.now() > deadline) throw new Error(`demo run ${run.id} not finished after ${timeoutMs} ms`)
    await new Promise((r) => setTimeout(r, 200))
  }
}

/** Upload, then run: what a planner finds after a nightly run. */
export async function loadDemo(baseUrl: string, skus: readonly string[], headers: Record<string, string> = {}): Promise<DemoRun> {
  await uploadDemo(baseUrl, demoSeries(skus), headers)
  return runDemo(baseUrl, skus, headers)
}

/**
 * Two SKUs for the worklist, in the same scenario: a garden planter launched six
 * months ago (a short history) and a heating spare part set up in the ERP with no
 * recorded demand yet (every period missing, so its fit fails).
 */
export const WORKLIST_DEMO_SERIES: readonly DemoSeries[] = [
  { sku: 'GRD-8101', firstPeriod: '2025-07', demand: [14, 22, 19, 25, 31, 28] },
  { sku: 'HTG-8102', firstPeriod: '2025-07', demand: [null, null, null, null, null, null] },
]

interface StoredHistory {
  readonly firstPeriod: string
  readonly demand: readonly (number | null)[]
  readonly tags: readonly string[]
}

/**
 * The month's actuals arrive for a SKU and run above its published forecast by
 * `factor` in each of the first `periods` forecast months, so its tracking signal
 * flags it (|TS| = periods >= 4 when every error has one sign).
 */
export async function arriveBiasedActuals(baseUrl: string, sku: string, headers: Record<string, string> = {}, factor = 1.4, periods = 5): Promise<void> {
  const path = `/v1/skus/${encodeURIComponent(sku)}`
  const forecast = await call<{ forecast: { period: string; demand: number }[] }>(baseUrl, `${path}/forecast?view=compact`, {}, headers)
  const history = await call<StoredHistory>(baseUrl, `${path}/history`, {}, headers)
  const actuals = forecast.forecast.slice(0, periods).map((p) => Math.round(p.demand * factor) + 1)
  const body = { frequency: 'month', firstPeriod: history.firstPeriod, demand: [...history.demand, ...actuals], tags: history.tags }
  await call(baseUrl, `${path}/history`, { method: 'PUT', body: JSON.stringify(body) }, headers)
}
