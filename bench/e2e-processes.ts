/**
 * Service processes for the end-to-end benchmarks: the API (dist/server.js with
 * RUN_WORKER=false) and worker processes (dist/worker-main.js), the compiled
 * JavaScript production runs (the bench scripts build it first), started as
 * children with a benchmark-only Redis prefix, their peak memory read from
 * /proc/<pid>/status (VmHWM; worker threads share their process's figure).
 */
import { spawn, type ChildProcess } from 'node:child_process'
import { readFileSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import type { Redis } from 'ioredis'
import { deletePrefix } from './e2e-redis.js'

const ROOT = fileURLToPath(new URL('..', import.meta.url))

export interface ServiceProcess {
  readonly name: string
  readonly child: ChildProcess
  /** Last lines of stderr and stdout, for the message when the process dies. */
  readonly tail: string[]
}

/**
 * Environment for a benchmark's API and worker processes: its own Redis prefix,
 * loopback only, workers apart from the API, no API keys (every request is the
 * default tenant) and results kept for an hour.
 */
export function serviceEnv(redisUrl: string, prefix: string, port: number): Record<string, string> {
  return {
    REDIS_URL: redisUrl,
    REDIS_PREFIX: prefix,
    HOST: '127.0.0.1',
    PORT: String(port),
    RUN_WORKER: 'false',
    LOG_LEVEL: process.env.LOG_LEVEL ?? 'warn',
    // The bench's own budget: far above the requests it sends, so no answer is a 429.
    RATE_LIMIT_MAX: '1000000',
    RESULT_RETENTION_SECONDS: '3600',
    API_KEYS: '',
  }
}

/** Starts `node <entry>`, an entry of dist/ (node itself, not npm, so the pid is the process that does the work). */
export function startService(name: string, entry: string, env: Record<string, string>, extraNodeArgs: string[] = []): ServiceProcess {
  const child = spawn(process.execPath, [...extraNodeArgs, entry], {
    cwd: ROOT,
    env: { ...process.env, ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  })
  const tail: string[] = []
  const keep = (chunk: Buffer) => {
    tail.push(...chunk.toString('utf8').split('\n').filter((l) => l.length > 0))
    if (tail.length > 40) tail.splice(0, tail.length - 40)
  }
  child.stdout?.on('data', keep)
  child.stderr?.on('data', keep)
  return { name, child, tail }
}

/** Resolves once GET /readyz answers 200; rejects when the process exits first or after `timeoutMs`. */
export async function waitReady(api: ServiceProcess, baseUrl: string, timeoutMs = 60_000): Promise<void> {
  const deadline = Date.now() + timeoutMs
  while (Date.now() < deadline) {
    if (api.child.exitCode !== null) throw new Error(`${api.name} exited (${api.child.exitCode}): ${api.tail.join('\n')}`)
    try {
      const res = await fetch(`${baseUrl}/readyz`)
      if (res.ok) return
    } catch {
      // not listening yet
    }
    await sleep(200)
  }
  throw new Error(`${api.name} not ready after ${timeoutMs} ms: ${api.tail.join('\n')}`)
}

/** Peak resident set size (VmHWM) of a live process in MiB, or null when it cannot be read. */
export function peakRssMiB(pid: number | undefined): number | null {
  if (pid === undefined) return null
  try {
    const status = readFileSync(`/proc/${pid}/status`, 'utf8')
    const kb = /VmHWM:\s+(\d+) kB/.exec(status)?.[1]
    return kb === undefined ? null : Number(kb) / 1024
  } catch {
    return null
  }
}

/**
 * CPU time (user + system, every thread) a live process has used so far, in
 * seconds, from /proc/<pid>/stat; null when it cannot be read. Clock ticks are
 * taken as 100 per second (USER_HZ on Linux).
 */
export function cpuSeconds(pid: number | undefined): number | null {
  if (pid === undefined) return null
  try {
    const stat = readFileSync(`/proc/${pid}/stat`, 'utf8')
    // Fields after the command name (which may hold spaces) start at state, field 3.
    const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ')
    return (Number(fields[11]) + Number(fields[12])) / 100
  } catch {
    return null
  }
}

/** SIGTERM, then SIGKILL after `graceMs`; resolves when the process has exited. */
export async function stopService(p: ServiceProcess, graceMs = 15_000): Promise<void> {
  if (p.child.exitCode !== null || p.child.signalCode !== null) return
  const exited = new Promise<void>((resolve) => p.child.once('exit', () => resolve()))
  p.child.kill('SIGTERM')
  const timer = setTimeout(() => p.child.kill('SIGKILL'), graceMs)
  await exited
  clearTimeout(timer)
}

/** Stops every process (in order), then deletes every key under `prefix`; returns how many keys. */
export async function stopAndClean(processes: readonly ServiceProcess[], redis: Redis, prefix: string): Promise<number> {
  for (const p of processes) await stopService(p)
  return deletePrefix(redis, prefix)
}

export function sleep(ms: number): Promise<void> {
  return new Promise((resolve) => setTimeout(resolve, ms))
}
