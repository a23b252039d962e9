/**
 * `npm run bench:abuse`: replays the hostile requests of issue 14 against a
 * running service and checks its targets. It builds dist/, starts the API
 * (dist/server.js, RUN_WORKER=false) and one worker process
 * (dist/worker-main.js) under a benchmark-only Redis prefix with two tenants,
 * then runs each scenario in turn while a probe asks GET /healthz one request
 * after another. Per scenario it prints the probe's latency (median, p99,
 * max), the API's peak RSS during it (VmHWM, reset before each scenario
 * through /proc/<pid>/clear_refs), what the service answered, and the
 * targets met or not:
 *
 *   /healthz p99 < 100 ms during every scenario;
 *   API RSS < 1 GB at the default body limit (64 MiB);
 *   the small tenant's run done within 5 s of submission while a heavy run fits.
 *
 * A scenario is one entry of SCENARIOS. Demand values are invented.
 *
 *   npm run bench:abuse                   every scenario
 *   npm run bench:abuse -- --only 1,10    some of them (by finding number)
 *   npm run bench:abuse -- --chunk-size 50   the service's CHUNK_SIZE (default: the service default)
 */
import { fork } from 'node:child_process'
import { writeFileSync } from 'node:fs'
import { Redis } from 'ioredis'
import { freePort } from './e2e-port.js'
import { peakRssMiB, serviceEnv, startService, stopAndClean, waitReady, type ServiceProcess } from './e2e-processes.js'

const GARDEN_KEY = 'bench-garden-key-0123456789'
const HEATING_KEY = 'bench-heating-key-0123456789'
const HEALTH_P99_TARGET_MS = 100
const RSS_TARGET_MIB = 1024
const SMALL_RUN_TARGET_MS = 5000

interface Ctx {
  readonly baseUrl: string
  readonly api: ServiceProcess
}

interface Outcome {
  /** What the service answered, one line. */
  readonly answer: string
  /** The small tenant's run time, for the fairness scenario. */
  readonly smallRunMs?: number
  /** Whether this scenario's body is at the default body limit (the RSS target applies). */
  readonly atBodyLimit?: boolean
}

interface Scenario {
  readonly finding: number
  readonly name: string
  /** Builds the request body before the probe starts, so building it never delays the probe's own answers. */
  readonly prepare?: () => string
  readonly run: (ctx: Ctx, body: string) => Promise<Outcome>
}

const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms))

/** The last body's UTF-8 bytes: encoded before the probe starts, so encoding tens of MB never delays the probe here. */
let lastBody: string | null = null
let lastBytes: Buffer = Buffer.alloc(0)
function bytesOf(body: string): Buffer {
  if (body !== lastBody) {
    lastBody = body
    lastBytes = Buffer.from(body, 'utf8')
  }
  return lastBytes
}

async function send(ctx: Ctx, method: string, path: string, key: string, body: string, contentType = 'application/json') {
  const res = await fetch(`${ctx.baseUrl}${path}`, {
    method,
    headers: { authorization: `Bearer ${key}`, 'content-type': contentType },
    body: bytesOf(body),
  })
  const text = await res.text()
  return { status: res.status, text }
}

/** `{"horizon":3,"series":[...]}` of `n` series, each `values` string demand values: every value invalid. */
function invalidRunBody(n: number, values: number): string {
  const demand = JSON.stringify(Array.from({ length: values }, () => 'x'))
  const parts: string[] = []
  for (let i = 0; i < n; i++) parts.push(`{"sku":"BENCH-${i}","demand":${demand}}`)
  return `{"horizon":3,"series":[${parts.join(',')}]}`
}

/** `{"horizon":3,"series":[...]}` of `n` valid series of `values` demand values each (invented numbers). */
function validRunBody(n: number, values: number): string {
  const parts: string[] = []
  for (let i = 0; i < n; i++) parts.push(`{"sku":"BENCH-${i}","demand":${JSON.stringify(Array.from({ length: values }, (_, t) => 20 + ((i + 7 * t) % 11)))}}`)
  return `{"horizon":3,"series":[${parts.join(',')}]}`
}

function summarise(status: number, text: string): string {
  let detail: string
  try {
    const body = JSON.parse(text) as { detail?: string; title?: string; accepted?: number; rejected?: number }
    detail = body.detail ?? body.title ?? (body.accepted !== undefined ? `accepted ${body.accepted}, rejected ${body.rejected}` : '')
  } catch {
    detail = text.slice(0, 80)
  }
  return `${status} ${detail}`.slice(0, 160)
}

const daily = (n: number, season: number) =>
  Array.from({ length: n }, (_, i) => Math.round(50 + 20 * Math.sin((2 * Math.PI * i) / season) + ((i * 7919) % 13)))

async function waitRun(ctx: Ctx, key: string, id: string, timeoutMs: number): Promise<{ status: string }> {
  const deadline = Date.now() + timeoutMs
  for (;;) {
    const res = await fetch(`${ctx.baseUrl}/v1/runs/${id}`, { headers: { authorization: `Bearer ${key}` } })
    const run = (await res.json()) as { status: string }
    if (run.status !== 'queued' && run.status !== 'running') return run
    if (Date.now() > deadline) return run
    await sleep(50)
  }
}

/** Adding a scenario is one entry here. */
const SCENARIOS: readonly Scenario[] = [
  {
    finding: 1,
    name: '25 MB run body of 200,000 series x 24 string values',
    prepare: () => invalidRunBody(200_000, 24),
    run: async (ctx, body) => {
      const res = await send(ctx, 'POST', '/v1/runs', GARDEN_KEY, body)
      return { answer: `${(body.length / 1e6).toFixed(1)} MB -> ${summarise(res.status, res.text)}` }
    },
  },
  {
    finding: 1,
    name: 'invalid run body just under the default 64 MiB limit',
    // About 130 bytes per series: 500,000 series come to about 62 MiB.
    prepare: () => invalidRunBody(500_000, 24),
    run: async (ctx, body) => {
      const res = await send(ctx, 'POST', '/v1/runs', GARDEN_KEY, body)
      return { answer: `${(body.length / 1024 / 1024).toFixed(1)} MiB -> ${summarise(res.status, res.text)}`, atBodyLimit: true }
    },
  },
  {
    finding: 1,
    name: 'valid run body of 200,000 series x 24 values (accepted, then cancelled)',
    prepare: () => validRunBody(200_000, 24),
    run: async (ctx, body) => {
      const res = await send(ctx, 'POST', '/v1/runs', GARDEN_KEY, body)
      const id = res.status === 202 ? (JSON.parse(res.text) as { id: string }).id : undefined
      // The bench measures the submission, not the fitting: stop the run so the next scenarios start idle.
      if (id !== undefined) await fetch(`${ctx.baseUrl}/v1/runs/${id}/cancel`, { method: 'POST', headers: { authorization: `Bearer ${GARDEN_KEY}` } })
      return { answer: `${(body.length / 1e6).toFixed(1)} MB -> ${res.status}${id === undefined ? ` ${summarise(res.status, res.text)}` : ' accepted'}` }
    },
  },
  {
    finding: 2,
    name: 'sync forecast: 10,000 daily points, season 366, 12 origins, horizon 1000',
    prepare: () =>
      JSON.stringify({ horizon: 1000, frequency: 'day', seasonLength: 366, holdoutOrigins: 12, series: [{ sku: 'HEAVY', demand: daily(10_000, 366) }] }),
    run: async (ctx, body) => {
      const res = await send(ctx, 'POST', '/v1/forecast', GARDEN_KEY, body)
      return { answer: summarise(res.status, res.text) }
    },
  },
  {
    finding: 2,
    name: 'sync forecast under the cost limit: 3 series of 2,000 daily points, season 366',
    // 2,000 daily points x season 366 x 19 models = 13,908,000 units each; 3 of them fit within the cost limit.
    prepare: () =>
      JSON.stringify({
        horizon: 60,
        frequency: 'day',
        seasonLength: 366,
        series: Array.from({ length: 3 }, (_, i) => ({ sku: `SLOW-${i}`, demand: daily(2000 + i, 366) })),
      }),
    run: async (ctx, body) => {
      const res = await send(ctx, 'POST', '/v1/forecast', GARDEN_KEY, body)
      let items: string
      try {
        const parsed = JSON.parse(res.text) as { items?: { failure?: { code: string } }[] }
        items = (parsed.items ?? []).map((i) => i.failure?.code ?? 'ok').join(', ')
      } catch {
        items = res.text.slice(0, 80)
      }
      return { answer: `${res.status} items: ${items}` }
    },
  },
  {
    finding: 3,
    name: 'CSV upload: one line over 64 KiB, then 100,000 good rows',
    prepare: () => {
      const rows = ['sku,period,demand', `LONG,2024-01,${'9'.repeat(70_000)}`]
      for (let i = 0; i < 100_000; i++) rows.push(`CSV-${i % 1000},${2000 + Math.floor(i / 1000 / 12)}-${String(((i / 1000) % 12 | 0) + 1).padStart(2, '0')},${i % 17}`)
      return rows.join('\n')
    },
    run: async (ctx, body) => {
      const res = await send(ctx, 'POST', '/v1/history?frequency=month', HEATING_KEY, body, 'text/csv')
      return { answer: summarise(res.status, res.text) }
    },
  },
  {
    finding: 9,
    name: 'CSV upload of 500,000 distinct SKUs (about 9.5 MB)',
    prepare: () => {
      const rows = ['sku,period,demand']
      for (let i = 0; i < 500_000; i++) rows.push(`Q-${i},2024-01,${i % 9}`)
      return rows.join('\n')
    },
    run: async (ctx, body) => {
      const res = await send(ctx, 'POST', '/v1/history?frequency=month', HEATING_KEY, body, 'text/csv')
      return { answer: summarise(res.status, res.text) }
    },
  },
  {
    finding: 10,
    name: "a small tenant's 6-point run while another tenant's heavy run fits",
    // 2,000 monthly series of 120 points: 4 chunks at the default CHUNK_SIZE, so every worker thread is busy with them.
    prepare: () =>
      JSON.stringify({ horizon: 12, frequency: 'month', series: Array.from({ length: 2000 }, (_, i) => ({ sku: `BIG-${i}`, demand: daily(120 + (i % 7), 12) })) }),
    run: async (ctx, body) => {
      const big = await send(ctx, 'POST', '/v1/runs', GARDEN_KEY, body)
      const bigId = (JSON.parse(big.text) as { id: string }).id
      // Let the heavy run's chunks start fitting first.
      for (;;) {
        const r = (await (await fetch(`${ctx.baseUrl}/v1/runs/${bigId}`, { headers: { authorization: `Bearer ${GARDEN_KEY}` } })).json()) as { status: string }
        if (r.status === 'running') break
        await sleep(100)
      }
      await sleep(2000)
      const t0 = performance.now()
      const small = await send(ctx, 'POST', '/v1/runs', HEATING_KEY, JSON.stringify({ horizon: 3, series: [{ sku: 'SMALL', demand: [4, 6, 5, 7, 6, 8] }] }))
      const smallId = (JSON.parse(small.text) as { id: string }).id
      const smallRun = await waitRun(ctx, HEATING_KEY, smallId, 600_000)
      const smallRunMs = performance.now() - t0
      const bigNow = (await (await fetch(`${ctx.baseUrl}/v1/runs/${bigId}`, { headers: { authorization: `Bearer ${GARDEN_KEY}` } })).json()) as {
        status: string
        progress: { done: number; total: number }
      }
      await fetch(`${ctx.baseUrl}/v1/runs/${bigId}`, { method: 'DELETE', headers: { authorization: `Bearer ${GARDEN_KEY}` } })
      return {
        answer: `small run ${smallRun.status}; heavy run then ${bigNow.status} at ${bigNow.progress.done}/${bigNow.progress.total} (cancelled after)`,
        smallRunMs,
      }
    },
  },
]

/**
 * The probe's loop, run in a process of its own: sending a body of tens of MB
 * from this process would otherwise delay the probe's own requests and answers
 * here, and that delay would be counted against the service.
 */
const PROBE_SCRIPT = `
const latencies = []
let running = true
process.on('message', () => { running = false })
;(async () => {
  while (running) {
    const t = performance.now()
    try {
      const res = await fetch(process.argv[1] + '/healthz', { signal: AbortSignal.timeout(60000) })
      await res.text()
    } catch {}
    latencies.push(performance.now() - t)
    await new Promise((r) => setTimeout(r, 10))
  }
  process.send(latencies, () => process.exit(0))
})()
`

/** GET /healthz one after another, from a child process, until stopped; returns each latency in ms (a timed-out probe counts with its full time). */
function probe(baseUrl: string): { stop: () => Promise<number[]> } {
  const child = fork('-e', [PROBE_SCRIPT, baseUrl], { execArgv: [], stdio: ['ignore', 'inherit', 'inherit', 'ipc'] })
  const result = new Promise<number[]>((resolve, reject) => {
    child.once('message', (m) => resolve(m as number[]))
    child.once('error', reject)
  })
  return {
    stop: async () => {
      child.send('stop')
      return result
    },
  }
}

const quantile = (sorted: readonly number[], q: number) => sorted[Math.min(sorted.length - 1, Math.floor(q * sorted.length))] ?? NaN

function resetPeakRss(pid: number | undefined): void {
  if (pid === undefined) return
  try {
    writeFileSync(`/proc/${pid}/clear_refs`, '5')
  } catch {
    // not Linux or not allowed: the peak then covers the process's life so far
  }
}

interface Row {
  readonly scenario: Scenario
  readonly outcome: Outcome | { answer: string }
  readonly probes: number
  readonly p50: number
  readonly p99: number
  readonly max: number
  readonly rssMiB: number | null
  readonly verdicts: string[]
}

async function main(): Promise<void> {
  const only = (() => {
    const at = process.argv.indexOf('--only')
    return at >= 0 ? new Set((process.argv[at + 1] ?? '').split(',').map(Number)) : null
  })()
  const redisUrl = process.env.REDIS_URL ?? 'redis://127.0.0.1:6379'
  const prefix = `bench-abuse-${process.pid}`
  const port = await freePort()
  const chunkAt = process.argv.indexOf('--chunk-size')
  const env = {
    ...serviceEnv(redisUrl, prefix, port),
    API_KEYS: `garden:${GARDEN_KEY},heating:${HEATING_KEY}`,
    ...(chunkAt >= 0 ? { CHUNK_SIZE: String(process.argv[chunkAt + 1]) } : {}),
  }
  const api = startService('api', 'dist/server.js', env)
  const worker = startService('worker', 'dist/worker-main.js', env, ['--single-threaded'])
  const redis = new Redis(redisUrl)
  const baseUrl = `http://127.0.0.1:${port}`
  const rows: Row[] = []
  try {
    await waitReady(api, baseUrl)
    for (const scenario of SCENARIOS) {
      if (only !== null && !only.has(scenario.finding)) continue
      process.stdout.write(`finding ${scenario.finding}: ${scenario.name} ... `)
      const body = scenario.prepare?.() ?? ''
      bytesOf(body)
      resetPeakRss(api.child.pid)
      const p = probe(baseUrl)
      let outcome: Outcome | { answer: string }
      try {
        outcome = await scenario.run({ baseUrl, api }, body)
      } catch (err) {
        outcome = { answer: `request failed: ${(err as Error).message}` }
      }
      const latencies = (await p.stop()).sort((a, b) => a - b)
      const rssMiB = peakRssMiB(api.child.pid)
      const p99 = quantile(latencies, 0.99)
      const verdicts = [`healthz p99 < ${HEALTH_P99_TARGET_MS} ms: ${p99 < HEALTH_P99_TARGET_MS ? 'met' : 'NOT met'}`]
      if ('atBodyLimit' in outcome && outcome.atBodyLimit) {
        verdicts.push(`API RSS < 1 GB: ${rssMiB !== null && rssMiB < RSS_TARGET_MIB ? 'met' : 'NOT met'}`)
      }
      if ('smallRunMs' in outcome && outcome.smallRunMs !== undefined) {
        verdicts.push(`small run within 5 s: ${outcome.smallRunMs < SMALL_RUN_TARGET_MS ? 'met' : 'NOT met'}`)
      }
      const row = { scenario, outcome, probes: latencies.length, p50: quantile(latencies, 0.5), p99, max: latencies.at(-1) ?? NaN, rssMiB, verdicts }
      rows.push(row)
      console.log('done')
      console.log(`  answer: ${outcome.answer}`)
      console.log(
        `  healthz: ${row.probes} probes, median ${row.p50.toFixed(1)} ms, p99 ${p99.toFixed(1)} ms, max ${row.max.toFixed(1)} ms; ` +
          `API peak RSS ${rssMiB === null ? '?' : rssMiB.toFixed(0)} MiB` +
          ('smallRunMs' in outcome && outcome.smallRunMs !== undefined ? `; small run ${(outcome.smallRunMs / 1000).toFixed(2)} s` : ''),
      )
      console.log(`  ${verdicts.join('; ')}`)
    }
  } finally {
    await stopAndClean([api, worker], redis, prefix)
    redis.disconnect()
  }
  console.log('\n| Finding | Scenario | Answer | healthz median / p99 / max (ms) | API peak RSS (MiB) | Small run (s) | Targets |')
  console.log('|---|---|---|---|---|---|---|')
  for (const r of rows) {
    const small = 'smallRunMs' in r.outcome && r.outcome.smallRunMs !== undefined ? (r.outcome.smallRunMs / 1000).toFixed(2) : ''
    console.log(
      `| ${r.scenario.finding} | ${r.scenario.name} | ${r.outcome.answer.replace(/\|/g, '/')} | ${r.p50.toFixed(1)} / ${r.p99.toFixed(1)} / ${r.max.toFixed(0)} | ` +
        `${r.rssMiB === null ? '?' : r.rssMiB.toFixed(0)} | ${small} | ${r.verdicts.join('; ')} |`,
    )
  }
}

await main()
