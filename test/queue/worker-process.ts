import { spawn, type ChildProcess } from 'node:child_process'
import { fileURLToPath } from 'node:url'

const ROOT = fileURLToPath(new URL('../../', import.meta.url))

/** A `src/worker-main.ts` child process and the JSON log lines it printed. */
export interface WorkerProcess {
  readonly child: ChildProcess
  readonly logs: Record<string, unknown>[]
  readonly stderr: string[]
  /** Chunk indexes this process committed, by run id. */
  chunksOf(runId: string): number[]
  /** Chunk indexes this process finished with any outcome (including 'duplicate'), by run id. */
  processedOf(runId: string): number[]
  waitForLog(msg: string, timeoutMs?: number): Promise<Record<string, unknown>>
  /** Resolves with the exit code (or signal) once the process has exited and its output is read. */
  exited: Promise<number | string>
}

/**
 * Starts a worker process directly under node with tsx's loader (not the tsx
 * CLI, which would put a second process in between and keep SIGKILL from
 * reaching the worker).
 */
export function startWorkerProcess(env: Record<string, string>): WorkerProcess {
  const child = spawn(process.execPath, ['--import', 'tsx', 'src/worker-main.ts'], {
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
  // 'close' rather than 'exit': it comes after the last output has been read.
  const exited = new Promise<number | string>((resolve) =>
    child.once('close', (code, signal) => resolve(code ?? signal ?? 'unknown')),
  )
  return {
    child,
    logs,
    stderr,
    exited,
    chunksOf: (runId) =>
      logs
        .filter((l) => l.msg === 'chunk processed' && l.runId === runId && l.outcome !== 'duplicate')
        .map((l) => Number(l.chunkIndex)),
    processedOf: (runId) =>
      logs.filter((l) => l.msg === 'chunk processed' && l.runId === runId).map((l) => Number(l.chunkIndex)),
    waitForLog: (msg, timeoutMs = 30_000) => {
      const seen = logs.find((l) => l.msg === msg)
      if (seen) return Promise.resolve(seen)
      return new Promise((resolve, reject) => {
        const timer = setTimeout(
          () => reject(new Error(`worker did not log "${msg}" within ${timeoutMs} ms; stderr: ${stderr.join('')}`)),
          timeoutMs,
        )
        waiters.push({ msg, resolve: (l) => (clearTimeout(timer), resolve(l)) })
      })
    },
  }
}

/** SIGTERM, then wait for the exit (SIGKILL after `graceMs`). */
export async function stopWorkerProcess(w: WorkerProcess, graceMs = 20_000): Promise<number | string> {
  if (w.child.exitCode !== null || w.child.signalCode !== null) return w.exited
  w.child.kill('SIGTERM')
  const timer = setTimeout(() => w.child.kill('SIGKILL'), graceMs)
  const code = await w.exited
  clearTimeout(timer)
  return code
}
