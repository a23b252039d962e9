/**
 * HTTP client side of the end-to-end benchmarks: run bodies of seeded synthetic
 * 60-point monthly SKUs (bench/synthetic.ts, one batch per body, seeded per
 * batch so each can be built alone), submission, polling and result paging.
 * Invented data, for timing only.
 */
import { SHAPES, createRandom, syntheticSeries } from './synthetic.js'
import { sleep } from './e2e-processes.js'

export const LENGTH = 60
export const HORIZON = 12

export function skuName(i: number): string {
  return `E-${String(i).padStart(7, '0')}`
}

/** JSON body of POST /v1/runs for SKUs first..first+count-1 (seed per batch, so batches are reproducible alone). */
export function runBody(seed: number, first: number, count: number): string {
  const random = createRandom(seed + first)
  const parts: string[] = []
  for (let i = first; i < first + count; i++) {
    const values = syntheticSeries(random, SHAPES[i % SHAPES.length]!, LENGTH)
    parts.push(`{"sku":"${skuName(i)}","firstPeriod":"2021-01","demand":[${values.join(',')}]}`)
  }
  return `{"horizon":${HORIZON},"frequency":"month","series":[${parts.join(',')}]}`
}

export interface Client {
  readonly baseUrl: string
  readonly headers: Record<string, string>
}

async function failWith(res: Response, what: string): Promise<never> {
  throw new Error(`${what}: HTTP ${res.status} ${(await res.text()).slice(0, 500)}`)
}

export async function submitRun(client: Client, body: string): Promise<string> {
  const res = await fetch(`${client.baseUrl}/v1/runs`, {
    method: 'POST',
    headers: { ...client.headers, 'content-type': 'application/json' },
    body,
  })
  if (res.status !== 202) await failWith(res, 'POST /v1/runs')
  return ((await res.json()) as { id: string }).id
}

export interface RunView {
  id: string
  status: string
  progress: { total: number; done: number; failed: number }
  startedAt: string | null
  finishedAt: string | null
  summary: unknown
}

export async function getRun(client: Client, runId: string): Promise<RunView> {
  const res = await fetch(`${client.baseUrl}/v1/runs/${runId}`, { headers: client.headers })
  if (!res.ok) await failWith(res, `GET /v1/runs/${runId}`)
  return (await res.json()) as RunView
}

/** Polls GET /v1/runs/{id} every `intervalMs` until the run leaves queued/running. */
export async function waitForRun(client: Client, runId: string, intervalMs = 250): Promise<RunView> {
  for (;;) {
    const run = await getRun(client, runId)
    if (run.status !== 'queued' && run.status !== 'running') return run
    await sleep(intervalMs)
  }
}

export interface PagedResults {
  items: number
  errors: number
  pages: number
  bytes: number
  /** One item seen, for a sanity check of the shape. */
  sample: Record<string, unknown> | null
}

/** Pages through every result of a run with `limit` items per page. */
export async function pageResults(client: Client, runId: string, limit = 1000): Promise<PagedResults> {
  const out: PagedResults = { items: 0, errors: 0, pages: 0, bytes: 0, sample: null }
  let cursor: string | null = null
  do {
    const query = cursor === null ? `limit=${limit}` : `limit=${limit}&cursor=${encodeURIComponent(cursor)}`
    const res = await fetch(`${client.baseUrl}/v1/runs/${runId}/results?${query}`, { headers: client.headers })
    if (!res.ok) await failWith(res, `GET /v1/runs/${runId}/results`)
    const text = await res.text()
    out.bytes += text.length
    const page = JSON.parse(text) as { items: Record<string, unknown>[]; nextCursor: string | null }
    out.pages++
    out.items += page.items.length
    for (const item of page.items) if ('failure' in item) out.errors++
    out.sample ??= page.items[0] ?? null
    cursor = page.nextCursor
  } while (cursor !== null)
  return out
}
