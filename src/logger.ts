import { pino, type DestinationStream, type Logger, type LevelWithSilent } from 'pino'

export type { Logger }

/** Header values never written to the log. */
export const REDACT_PATHS = [
  'req.headers.authorization',
  'req.headers.cookie',
  'headers.authorization',
  'request.headers.authorization',
]

/**
 * The service logger: JSON lines, auth headers redacted. Fastify adds the
 * request id (`reqId`); handlers add `tenant` and `runId` with child loggers.
 * `destination` lets tests capture the lines.
 */
export function createLogger(opts: { level: LevelWithSilent; destination?: DestinationStream }): Logger {
  return pino(
    {
      level: opts.level,
      base: { service: 'almanac' },
      redact: { paths: REDACT_PATHS, censor: '[redacted]' },
      timestamp: pino.stdTimeFunctions.isoTime,
    },
    opts.destination,
  )
}

/** Anything that emits 'error' events: a Redis connection, a BullMQ queue or worker. */
export interface ErrorEmitter {
  on(event: 'error', listener: (err: Error) => void): unknown
}

/**
 * Logs the 'error' events of a connection, queue or worker (without a
 * listener ioredis prints them to stderr and some emitters throw). While
 * Redis is away a connection fails every reconnect attempt, so one line per
 * `everyMs` is written, with how many errors it stands for.
 */
export function logErrors(emitter: ErrorEmitter, log: Logger, what: string, everyMs = 10_000): void {
  let lastAt = -Infinity
  let unlogged = 0
  emitter.on('error', (err) => {
    const now = Date.now()
    if (now - lastAt < everyMs) {
      unlogged++
      return
    }
    log.warn({ err, errors: unlogged + 1 }, `${what}: error`)
    lastAt = now
    unlogged = 0
  })
}
