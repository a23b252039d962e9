import { spawn, type ChildProcess } from 'node:child_process'
import { mkdtempSync, rmSync } from 'node:fs'
import { createServer } from 'node:net'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { fileURLToPath } from 'node:url'
import { Redis } from 'ioredis'

/**
 * Child processes for fault tests: the API (`src/server.ts`) and a private
 * `redis-server` that a test may stop and restart. Worker processes come from
 * test/queue/worker-process.ts, built on `spawnTs` here.
 */

const ROOT = fileURLToPath(new URL('../../', import.meta.url))

/** A TCP port that was free a moment ago on 127.0.0.1. */
export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = createServer()
    srv.once('error', reject)
    srv.listen(0, '127.0.0.1', () => {
      const { port } = srv.address() as { port: number }
      srv.close(() => resolve(port))
    })
  })
}

/** Polls `check` until it returns something other than undefined. */
export async function until<T>(check: () => Promise<T | undefined>, timeoutMs: number, what: string): Promise<T> {
  const deadline = Date.now() + timeoutMs
  let lastError = ''
  for (;;) {
    const v = await check().catch((err: Error) => ((lastError = `; last error: ${err.message}`), undefined))
    if (v !== undefined) return v
    if (Date.now() > deadline) throw new Error(`timed out after ${timeoutMs} ms waiting for ${what}${lastError}`)
    await new Promise((r) => setTimeout(r, 100))
  }
}

/** Resolves once the Redis server at `url` answers PING with PONG; rejects after `timeoutMs`. */
export function untilRedisAnswers(url: string, what: string, timeoutMs = 15_000): Promise<true> {
  return until(
    async () => {
      const probe = new Redis(url, { lazyConnect: true, retryStrategy: () => null, maxRetriesPerRequest: 0 })
      probe.on('error', () => undefined)
      try {
        await probe.connect()
        return (await probe.ping()) === 'PONG' ? true : undefined
      } finally {
        probe.disconnect()
      }
    },
    timeoutMs,
    what,
  )
}

export interface ChildLogs {
  readonly child: ChildProcess
  readonly logs: Record<string, unknown>[]
  readonly stderr: string[]
  readonly exited: Promise<number | string>
  waitForLog(msg: string, timeoutMs?: number): Promise<Record<string, unknown>>
}

export interface SpawnOptions {
  /** Names the process in timeout errors (default: the entry path). */
  label?: string
  /**
   * Which child event settles `exited` (default 'exit'); 'close' comes after
   * the last output has been read.
   */
  exitEvent?: 'exit' | 'close'
  /** Node or V8 flags before the entry (e.g. a worker's WORKER_NODE_FLAGS). */
  nodeFlags?: readonly string[]
}

/**
 * Runs `node --import tsx <entry>` and collects its JSON log lines. Directly
 * under node with tsx's loader (not the tsx CLI, which would put a second
 * process in between), so signals, SIGKILL included, reach the service itself.
 */
export function spawnTs(entry: string, env: Record<string, string>, options: SpawnOptions = {}): ChildLogs {
  return spawnNode([...(options.nodeFlags ?? []), '--import', 'tsx', entry], env, { label: entry, ...options })
}

/** Runs `node <entry>` (compiled JavaScript, no loader) and collects its JSON log lines, as spawnTs. */
export function spawnJs(entry: string, env: Record<string, string>, options: SpawnOptions = {}): ChildLogs {
  return spawnNode([...(options.nodeFlags ?? []), entry], env, { label: entry, ...options })
}

function spawnNode(args: string[], env: Record<string, string>, options: SpawnOptions & { label: string }): ChildLogs {
  const label = options.label
  const child = spawn(process.execPath, args, {
    cwd: ROOT,
    env: { PATH: process.env.PATH ?? '', LOG_LEVEL: 'info', ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  })
  const logs: Record<string, unknown>[] = []
  const stderr: string[] = []
  const waiters: { msg: string; resolve: (l: Record<string, unknown>) => void }[] = []
  let buffer = ''
  child.stdout!.setEncoding('utf8').on('data', (chunk: string) => {
    buffer += chunk
    let nl: number
    while ((nl = buffer.indexOf('\n')) >= 0) {
      const line = buffer.slice(0, nl)
      buffer = buffer.slice(nl + 1)
      try {
        const entry = JSON.parse(line) as Record<string, unknown>
        logs.push(entry)
        for (const w of waiters.filter((w) => w.msg === entry.msg)) w.resolve(entry)
      } catch {
        stderr.push(`stdout (not JSON): ${line}`)
      }
    }
  })
  child.stderr!.setEncoding('utf8').on('data', (chunk: string) => stderr.push(chunk))
  const exited = new Promise<number | string>((resolve) =>
    child.once(options.exitEvent ?? 'exit', (code: number | null, signal: NodeJS.Signals | null) =>
      resolve(code ?? signal ?? 'unknown'),
    ),
  )
  return {
    child,
    logs,
    stderr,
    exited,
    waitForLog: (msg, timeoutMs = 30_000) => {
      const seen = logs.find((l) => l.msg === msg)
      if (seen) return Promise.resolve(seen)
      return new Promise((resolve, reject) => {
        const timer = setTimeout(
          () => reject(new Error(`${label} did not log "${msg}" within ${timeoutMs} ms; stderr: ${stderr.join('')}`)),
          timeoutMs,
        )
        waiters.push({ msg, resolve: (l) => (clearTimeout(timer), resolve(l)) })
      })
    },
  }
}

export interface ApiProcess extends ChildLogs {
  readonly baseUrl: string
}

/**
 * Starts `src/server.ts` on a free port (or `port`) and resolves once it
 * listens. RUN_WORKER defaults to false: start workers beside it.
 */
export async function startApiProcess(env: Record<string, string>, port?: number): Promise<ApiProcess> {
  const p = port ?? (await freePort())
  // A port just released may still be held for a moment: a given port is tried a few times.
  for (let attempt = 1; ; attempt++) {
    const api = spawnTs('src/server.ts', { RUN_WORKER: 'false', HOST: '127.0.0.1', ...env, PORT: String(p) })
    const outcome = await Promise.race([
      api.waitForLog('almanac API listening', 30_000).then(() => 'listening' as const),
      api.exited.then((code) => `exited (${code})`),
    ])
    if (outcome === 'listening') return { ...api, baseUrl: `http://127.0.0.1:${p}` }
    const why = `${outcome}; log: ${JSON.stringify(api.logs.slice(-3))}; stderr: ${api.stderr.join('')}`
    if (port === undefined || attempt >= 5) throw new Error(`API did not start on port ${p}: ${why}`)
    await new Promise((r) => setTimeout(r, 500))
  }
}

/** SIGTERM, then wait for the exit (SIGKILL after `graceMs`). */
export async function stopProcess(p: ChildLogs, graceMs = 20_000): Promise<number | string> {
  if (p.child.exitCode !== null || p.child.signalCode !== null) return p.exited
  p.child.kill('SIGTERM')
  const timer = setTimeout(() => p.child.kill('SIGKILL'), graceMs)
  const code = await p.exited
  clearTimeout(timer)
  return code
}

/**
 * A private redis-server on 127.0.0.1 with append-only persistence fsynced on
 * every write, so a restart on the same port and directory loses nothing.
 */
export class PrivateRedis {
  private proc: ChildProcess | null = null
  private exited: Promise<unknown> = Promise.resolve()

  private constructor(
    readonly port: number,
    readonly dir: string,
    private readonly bin: string,
  ) {}

  static async start(bin = process.env.REDIS_SERVER_BIN ?? 'redis-server'): Promise<PrivateRedis> {
    const r = new PrivateRedis(await freePort(), mkdtempSync(join(tmpdir(), 'almanac-fault-redis-')), bin)
    await r.restart()
    return r
  }

  get url(): string {
    return `redis://127.0.0.1:${this.port}`
  }

  /** Starts the server (again) on the same port and directory; resolves when it answers PING. */
  async restart(): Promise<void> {
    if (this.proc) throw new Error('private redis is already running')
    const args = ['--port', String(this.port), '--bind', '127.0.0.1', '--appendonly', 'yes', '--appendfsync', 'always']
    args.push('--dir', this.dir, '--save', '', '--protected-mode', 'no')
    const proc = spawn(this.bin, args, { stdio: 'ignore' })
    this.proc = proc
    this.exited = new Promise((resolve) => proc.once('exit', resolve))
    proc.once('error', () => undefined)
    // PONG only once the append-only file is loaded (LOADING errors before that).
    await untilRedisAnswers(this.url, `redis-server on port ${this.port}`)
  }

  /** Kills the server at once (SIGKILL): no chance to save or flush anything beyond what AOF already has. */
  async kill(): Promise<void> {
    if (!this.proc) return
    this.proc.kill('SIGKILL')
    await this.exited
    this.proc = null
  }

  /** Asks the server to exit without a snapshot (SHUTDOWN NOSAVE); the append-only file stays as written. */
  async shutdownNoSave(): Promise<void> {
    if (!this.proc) return
    const client = new Redis(this.url, { retryStrategy: () => null, maxRetriesPerRequest: 0 })
    client.on('error', () => undefined)
    await client.call('SHUTDOWN', 'NOSAVE').catch(() => undefined) // the connection drops as the server exits
    client.disconnect()
    await this.exited
    this.proc = null
  }

  /** Stops the server and removes its data directory. */
  async destroy(): Promise<void> {
    await this.kill()
    rmSync(this.dir, { recursive: true, force: true })
  }
}
