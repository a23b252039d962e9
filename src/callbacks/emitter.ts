import { Queue } from 'bullmq'
import { logErrors, type Logger } from '../logger.js'
import type { RedisClient } from '../storage/redis.js'
import { RUN_EVENT_JOB, RUN_EVENT_JOB_OPTIONS, CALLBACK_QUEUE, runEventJobId } from './names.js'
import type { RunEventJob } from './payload.js'

/** Announces that a run reached a terminal status; the callback worker does the rest. */
export interface RunEventEmitter {
  runEnded(tenant: string, runId: string): Promise<void>
  close(): Promise<void>
}

/**
 * Emits onto the callback queue over the caller's connection (which the
 * caller closes). One job per run (deterministic id), so emitting twice for
 * the same run (a retried chunk) is harmless. A failed add() rejects; the
 * queue's connection errors are logged.
 */
export function createRunEventEmitter(connection: RedisClient, prefix: string, log: Logger): RunEventEmitter {
  const queue = new Queue<RunEventJob>(CALLBACK_QUEUE, { connection, prefix })
  logErrors(queue, log, 'run events queue')
  return {
    async runEnded(tenant, runId) {
      await queue.add(RUN_EVENT_JOB, { tenant, runId }, { ...RUN_EVENT_JOB_OPTIONS, jobId: runEventJobId(runId) })
    },
    close: () => queue.close(),
  }
}
