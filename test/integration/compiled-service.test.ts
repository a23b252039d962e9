import { execFile } from 'node:child_process'
import { mkdtempSync, readdirSync, rmSync, symlinkSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { fileURLToPath } from 'node:url'
import { promisify } from 'node:util'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { WORKER_NODE_FLAGS } from '../../src/queue/worker-flags.js'
import { deleteKeys, redisUrlForTests, uniquePrefix } from '../helpers/redis.js'
import { freePort, spawnJs, stopProcess, type ChildLogs } from '../helpers/processes.js'
import { syntheticSeries, waitFor } from '../queue/fixtures.js'

/**
 * What production runs: `npm run build` (tsc -p tsconfig.build.json) compiled
 * into a directory of its own, then the API and a worker process started from
 * it with plain `node`, no TypeScript loader anywhere (the chunk processor on
 * the worker threads is compiled JavaScript too), fitting a small run.
 */
const ROOT = fileURLToPath(new URL('../../', import.meta.url))
let out = ''
let url = ''
const prefix = uniquePrefix('compiled')
const children: ChildLogs[] = []

beforeAll(async () => {
  url = await redisUrlForTests()
  out = mkdtempSync(join(tmpdir(), 'almanac-compiled-'))
  // The compiled modules resolve packages from the repository and are ES modules, as in dist/.
  symlinkSync(join(ROOT, 'node_modules'), join(out, 'node_modules'))
  writeFileSync(join(out, 'package.json'), '{ "type": "module" }\n')
  await promisify(execFile)(process.execPath, [join(ROOT, 'node_modules/typescript/bin/tsc'), '-p', 'tsconfig.build.json', '--outDir', join(out, 'dist'), '--incremental', 'false'], { cwd: ROOT })
}, 240_000)

afterAll(async () => {
  for (const c of children) await stopProcess(c, 20_000)
  await deleteKeys(url, prefix)
  if (out) rmSync(out, { recursive: true, force: true })
})

describe('the compiled service', { timeout: 120_000 }, () => {
  it('has no TypeScript among what production runs', () => {
    const files = readdirSync(join(out, 'dist'), { recursive: true }).map(String)
    expect(files).toContain(join('queue', 'processors', 'chunk.js'))
    expect(files.filter((f) => /\.(ts|mts|mjs)$/.test(f))).toEqual([])
  })

  it('serves the API and fits a run on worker threads from dist/ with plain node', async () => {
    const env = { REDIS_URL: url, REDIS_PREFIX: prefix, RUN_WORKER: 'false', HOST: '127.0.0.1', PORT: '0', WORKER_CONCURRENCY: '1', CHUNK_SIZE: '10' }
    const worker = spawnJs(join(out, 'dist/worker-main.js'), env, { label: 'compiled worker', nodeFlags: WORKER_NODE_FLAGS })
    children.push(worker)
    await worker.waitForLog('chunk worker started', 60_000)
    const port = await freePort()
    const api = spawnJs(join(out, 'dist/server.js'), { ...env, PORT: String(port) }, { label: 'compiled API' })
    children.push(api)
    await api.waitForLog('almanac API listening', 60_000)

    const base = `http://127.0.0.1:${port}`
    const series = syntheticSeries(25, 36, 'COMPILED').map((s) => ({ ...s, firstPeriod: '2023-01' }))
    const submitted = await fetch(`${base}/v1/runs`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ horizon: 3, series }) })
    expect(submitted.status).toBe(202)
    const { id } = (await submitted.json()) as { id: string }
    const run = await waitFor(
      async () => {
        const r = (await (await fetch(`${base}/v1/runs/${id}`)).json()) as { status: string; progress: { done: number } }
        return r.status === 'queued' || r.status === 'running' ? undefined : r
      },
      90_000,
      `compiled run ${id}`,
    )
    expect(run).toMatchObject({ status: 'succeeded', progress: { total: 25, done: 25, failed: 0 } })
    // The worker logs a chunk after committing it, so the last line may follow the run's success by a moment.
    const processed = await waitFor(async () => {
      const lines = worker.logs.filter((l) => l.msg === 'chunk processed')
      return lines.length >= 3 ? lines : undefined
    }, 10_000, 'three chunks logged')
    expect(processed).toHaveLength(3)
    expect(await stopProcess(api, 20_000)).toBe(0)
    expect(await stopProcess(worker, 20_000)).toBe(0)
  })
})
