/**
 * Read latency under load while a large run is fitting: starts the API and a
 * worker process (as bench/e2e.ts does, own Redis prefix), forecasts a first set
 * of SKUs, submits a large run, and while it fits sends GET /v1/skus/{sku}/forecast
 * (random SKUs of the first set) and GET /v1/runs/{runId} (the fitting run) from
 * a loopback load generator (autocannon) at a fixed overall rate, bounded in
 * count and time. Prints p50/p99 latency and the achieved rate per route, and
 * the run's progress at the start and end of the load (so the load overlapped
 * fitting). Stops the processes and deletes its keys afterwards.
 *
 *   npm run bench:poll [-- --rate 1000 --seconds 20 --skus 60000 --connections 20 --cpu-prof]
 * Target (from the product issue): p99 < 50 ms at 1,000 requests/s.
 */
import { randomBytes } from 'node:crypto'
import { availableParallelism, loadavg, tmpdir } from 'node:os'
import { join } from 'node:path'
import autocannon from 'autocannon'
import { Redis } from 'ioredis'
import { getRun, pageResults, runBody, skuName, submitRun, waitForRun, type Client } from './e2e-client.js'
import { freePort } from './e2e-port.js'
import { cpuSeconds, serviceEnv, startService, stopAndClean, waitReady, type ServiceProcess } from './e2e-processes.js'
import { positiveIntOption } from './cli.js'
import { WORKER_NODE_FLAGS } from '../src/queue/worker-flags.js'


const RATE = positiveIntOption('rate', 1000)
const SECONDS = Math.min(positiveIntOption('seconds', 20), 120)
const SKUS = positiveIntOption('skus', 60_000)
const CONNECTIONS = positiveIntOption('connections', 20)
const KNOWN = 2000 // SKUs forecast before the load starts
const BATCH = 20_000
const SEED = 17
const P99_TARGET_MS = 50
const redisUrl = process.env.REDIS_URL ?? 'redis://127.0.0.1:6379'
const prefix = `bench-poll-${randomBytes(4).toString('hex')}`
const out = (line = ''): void => {
  process.stdout.write(line + '\n')
}
const f = (v: number, d = 0): string => v.toLocaleString('en-US', { maximumFractionDigits: d, minimumFractionDigits: d })

const port = await freePort()
const baseUrl = `http://127.0.0.1:${port}`
const env = serviceEnv(redisUrl, prefix, port)
const redis = new Redis(redisUrl)
const client: Client = { baseUrl, headers: {} }
const processes: ServiceProcess[] = []

/** One autocannon load on loopback, `rate` requests/s, at most rate * SECONDS requests or SECONDS s. */
function load(title: string, rate: number, path: () => string): Promise<autocannon.Result> {
  return new Promise((resolve, reject) => {
    autocannon(
      {
        title,
        url: baseUrl,
        connections: Math.max(1, Math.round((CONNECTIONS * rate) / RATE)),
        overallRate: rate,
        amount: rate * SECONDS,
        duration: SECONDS + 5,
        timeout: 10,
        requests: [{ method: 'GET', setupRequest: (req) => ({ ...req, path: path() }) }],
      },
      (err, result) => (err ? reject(err) : resolve(result)),
    )
  })
}

try {
  // --cpu-prof: a CPU profile of the API process (to find what a request costs).
  const prof = process.argv.includes('--cpu-prof') ? ['--cpu-prof', '--cpu-prof-dir', join(tmpdir(), `almanac-poll-prof-${prefix}`)] : []
  if (prof.length > 0) out(`API CPU profile (written when it exits): ${prof[2]}`)
  processes.push(startService('api', 'dist/server.js', env, prof), startService('worker-1', 'dist/worker-main.js', env, [...WORKER_NODE_FLAGS]))
  await waitReady(processes[0]!, baseUrl)
  const known = await waitForRun(client, await submitRun(client, runBody(SEED, 0, KNOWN)), 100)
  if (known.status !== 'succeeded') throw new Error(`first run ${known.status}`)

  // The large run, in batches; the load polls the last one (it ends last).
  const runIds: string[] = []
  for (let first = KNOWN; first < KNOWN + SKUS; first += BATCH) {
    runIds.push(await submitRun(client, runBody(SEED, first, Math.min(BATCH, KNOWN + SKUS - first))))
  }
  const polled = runIds[runIds.length - 1]!
  const before = await getRun(client, polled)
  const apiCpuBefore = cpuSeconds(processes[0]!.child.pid) ?? 0
  const workerCpuBefore = cpuSeconds(processes[1]!.child.pid) ?? 0
  const clientCpuBefore = process.cpuUsage()
  const skuPath = () => `/v1/skus/${skuName(Math.floor(Math.random() * KNOWN))}/forecast`
  const [forecasts, runs] = await Promise.all([
    load('GET /v1/skus/{sku}/forecast', RATE / 2, skuPath),
    load('GET /v1/runs/{runId}', RATE / 2, () => `/v1/runs/${polled}`),
  ])
  const apiCpu = (cpuSeconds(processes[0]!.child.pid) ?? 0) - apiCpuBefore
  const workerCpu = (cpuSeconds(processes[1]!.child.pid) ?? 0) - workerCpuBefore
  const clientCpu = process.cpuUsage(clientCpuBefore)
  const after = await getRun(client, polled)
  const allDone = await Promise.all(runIds.map((id) => getRun(client, id)))
  const sample = await pageResults(client, known.id, 10)

  out(`Poll benchmark: ${f(RATE)} requests/s for up to ${SECONDS} s (half each route), ${CONNECTIONS} connections, loopback`)
  out(`machine: ${availableParallelism()} cores, load average ${loadavg()[0]!.toFixed(2)}; while fitting ${f(SKUS)} SKUs in ${runIds.length} runs ` +
    `(1 worker process, one thread per core)`)
  out(`polled run progress: ${before.status} ${f(before.progress.done)}/${f(before.progress.total)} at the start, ` +
    `${after.status} ${f(after.progress.done)}/${f(after.progress.total)} at the end; ` +
    `all runs done at the end: ${f(allDone.reduce((a, r) => a + r.progress.done, 0))}/${f(SKUS)}`)
  out(`forecast SKUs known: ${f(sample.items)} sampled OK before the load`)
  out()
  out('| route                          | requests | achieved req/s | p50 ms | p99 ms | max ms | non-2xx | errors |')
  out('|--------------------------------|----------|----------------|--------|--------|--------|---------|--------|')
  let worstP99 = 0
  for (const r of [forecasts, runs]) {
    const total = r['2xx'] + r.non2xx
    worstP99 = Math.max(worstP99, r.latency.p99)
    out(`| ${String(r.title).padEnd(30)} | ${f(total).padStart(8)} | ${f(total / r.duration, 0).padStart(14)} | ` +
      `${f(r.latency.p50).padStart(6)} | ${f(r.latency.p99).padStart(6)} | ${f(r.latency.max).padStart(6)} | ${f(r.non2xx).padStart(7)} | ${f(r.errors + r.timeouts).padStart(6)} |`)
  }
  const achieved = (forecasts['2xx'] + forecasts.non2xx) / forecasts.duration + (runs['2xx'] + runs.non2xx) / runs.duration
  out()
  out(`achieved overall: ${f(achieved)} requests/s of ${f(RATE)} asked`)
  const served = forecasts['2xx'] + forecasts.non2xx + runs['2xx'] + runs.non2xx
  out(`CPU during the load: API ${f(apiCpu, 1)} s (${f((apiCpu * 1000) / served, 2)} ms per request), worker ${f(workerCpu, 1)} s, ` +
    `load generator ${f((clientCpu.user + clientCpu.system) / 1e6, 1)} s, over ${f(Math.max(forecasts.duration, runs.duration), 1)} s of wall time`)
  out(`target p99 < ${P99_TARGET_MS} ms: ${worstP99 < P99_TARGET_MS ? 'MET' : 'NOT MET'} (worst route p99 ${f(worstP99)} ms)`)
  if (before.status !== 'running' && before.status !== 'queued') out('note: the polled run was not fitting when the load started')
} finally {
  const removed = await stopAndClean(processes, redis, prefix)
  out(`cleanup: stopped ${processes.length} processes, deleted ${f(removed)} keys under ${prefix}:`)
  redis.disconnect()
}
