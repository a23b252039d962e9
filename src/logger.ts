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
