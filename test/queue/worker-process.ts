import { WORKER_NODE_FLAGS } from '../../src/queue/worker-flags.js'
import { spawnTs, stopProcess, type ChildLogs } from '../helpers/processes.js'

/** A `src/worker-main.ts` child process and the JSON log lines it printed. */
export interface WorkerProcess extends ChildLogs {
  /** Chunk indexes this process committed, by run id. */
  chunksOf(runId: string): number[]
  /** Chunk indexes this process finished with any outcome (including 'duplicate'), by run id. */
  processedOf(runId: string): number[]
}

/**
 * Starts a worker process directly under node with tsx's loader (see
 * `spawnTs`). `exited` resolves once the process has exited and its output
 * has been read.
 */
export function startWorkerProcess(env: Record<string, string>): WorkerProcess {
  const proc = spawnTs('src/worker-main.ts', env, { label: 'worker', exitEvent: 'close', nodeFlags: WORKER_NODE_FLAGS })
  const { logs } = proc
  return {
    ...proc,
    chunksOf: (runId) =>
      logs
        .filter((l) => l.msg === 'chunk processed' && l.runId === runId && l.outcome !== 'duplicate')
        .map((l) => Number(l.chunkIndex)),
    processedOf: (runId) =>
      logs.filter((l) => l.msg === 'chunk processed' && l.runId === runId).map((l) => Number(l.chunkIndex)),
  }
}

/** SIGTERM, then wait for the exit (SIGKILL after `graceMs`). */
export function stopWorkerProcess(w: WorkerProcess, graceMs = 20_000): Promise<number | string> {
  return stopProcess(w, graceMs)
}
