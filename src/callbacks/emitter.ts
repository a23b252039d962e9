import { Queue } from 'bullmq'
import type { RedisClient } from '../storage/redis-client.js'
import { RUN_EVENT_JOB, RUN_EVENT_JOB_OPTIONS, CALLBACK_QUEUE, runEventJobId } from './names.js'
import type { RunEventJob } from './payload.js'

/** Announces that a run reached a terminal status; the callback worker does the rest. */
export interface RunEventEmitter {
  runEnded(tenant: string, runId: string): Promise<void>
  close(): Promise<void>
}

/**
 * Emits onto the callback queue. One job per run (deterministic id), so
 * emitting twice for the same run (a retried chunk) is harmless.
 */
export function createRunEventEmitter(connection: RedisClient, prefix: string): RunEventEmitter {
  const queue = new Queue<RunEventJob>(CALLBACK_QUEUE, { connection, prefix })
  queue.on('error', () => {}) // surfaced by the failing add()
  return {
    async runEnded(tenant, runId) {
      await queue.add(RUN_EVENT_JOB, { tenant, runId }, { ...RUN_EVENT_JOB_OPTIONS, jobId: runEventJobId(runId) })
    },
    close: () => queue.close(),
  }
}
