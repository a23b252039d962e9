import type { Logger } from './logger.js'

/** One step of closing something: its name for the log, and what to run. */
export type CloseStep = readonly [name: string, run: () => unknown]

/**
 * Runs every step in order even when one fails, so a stuck or already broken
 * resource does not keep the others open: each failure is logged and the next
 * step still runs. Rejects at the end, naming the failed steps, when any failed.
 */
export async function closeSteps(log: Logger, steps: readonly CloseStep[]): Promise<void> {
  const failed: { name: string; err: unknown }[] = []
  for (const [name, run] of steps) {
    try {
      await run()
    } catch (err) {
      failed.push({ name, err })
      log.error({ err, step: name }, 'close step failed')
    }
  }
  if (failed.length > 0) {
    throw new AggregateError(
      failed.map((f) => f.err),
      `could not close: ${failed.map((f) => f.name).join(', ')}`,
    )
  }
}
