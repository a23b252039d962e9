import { realpathSync } from 'node:fs'
import { pathToFileURL } from 'node:url'
import type { Config } from './config.js'
import { startCallbackWorker } from './callbacks/worker.js'
import { createLogger, type Logger } from './logger.js'
import { createRunGateway } from './queue/gateway.js'
import { startChunkWorker } from './queue/worker.js'
import { startRetentionWorker } from './retention/worker.js'
import { submitViaGateway } from './schedules/submit.js'
import { startScheduleWorker } from './schedules/worker.js'
import { closeSteps } from './shutdown.js'
import { configAndRedisOrExit, stopOnSignals } from './startup.js'

export interface ProcessWorkers {
  /** Chunk jobs at once in this process (one worker thread each). */
  readonly concurrency: number
  /** Stops every worker (in-flight jobs finish first) and closes what they opened, each step even if another fails. */
  close(): Promise<void>
}

/**
 * The one place that decides which workers a process runs: the chunk worker
 * (fitting, on worker threads), the callback worker (deliveries), the
 * schedule worker (firings, which submit runs through a gateway of their
 * own) and the idle-history retention sweep (off unless HISTORY_IDLE_DAYS).
 * `npm run worker` runs them; `npm start` too, beside the API, unless
 * RUN_WORKER=false.
 */
export function startProcessWorkers(config: Config, logger: Logger): ProcessWorkers {
  const chunks = startChunkWorker(config, logger)
  const callbacks = startCallbackWorker(config, logger)
  const scheduleGateway = createRunGateway(config, { logger })
  const schedules = startScheduleWorker(config, logger, {
    submit: submitViaGateway(scheduleGateway),
    getRun: (tenant, runId) => scheduleGateway.get(tenant, runId),
  })
  const retention = startRetentionWorker(config, logger)
  return {
    concurrency: chunks.concurrency,
    close: () =>
      closeSteps(logger, [
        ['chunk worker', () => chunks.close()],
        ['schedule worker', () => schedules.close()],
        ['schedule run gateway', () => scheduleGateway.close()],
        ['callback worker', () => callbacks.close()],
        ['retention worker', () => retention.close()],
      ]),
  }
}

/**
 * `npm run worker`: workers only, against the same Redis as the API. Run
 * more of these processes (on more machines) to add capacity; each one uses
 * every core through its worker-thread pool.
 */
async function main(): Promise<void> {
  const config = await configAndRedisOrExit()
  const logger = createLogger({ level: config.logLevel })
  const workers = startProcessWorkers(config, logger)
  stopOnSignals(logger, 'letting in-flight jobs finish', () => workers.close())
}

// server.ts imports startProcessWorkers; only as the process entry does this module start anything itself.
const entry = process.argv[1]
if (entry !== undefined && import.meta.url === pathToFileURL(realpathSync(entry)).href) void main()
