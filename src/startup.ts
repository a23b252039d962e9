import { createHash } from 'node:crypto'
import { readFileSync } from 'node:fs'
import { ConfigError, loadConfig, type Config } from './config.js'
import type { Logger } from './logger.js'
import { assertRedisReachable } from './storage/redis.js'

/** What both processes (server.ts, worker-main.ts) do before starting: read the config and reach Redis, or exit with one line saying why. */
export async function configAndRedisOrExit(): Promise<Config> {
  let config: Config
  try {
    config = loadConfig(process.env, {
      readFile: (path) => readFileSync(path, 'utf8'),
      hash: (key) => createHash('sha256').update(key, 'utf8').digest('hex'),
    })
  } catch (err) {
    if (err instanceof ConfigError) exitWith(err.message)
    throw err
  }
  try {
    await assertRedisReachable(config)
  } catch (err) {
    exitWith((err as Error).message)
  }
  return config
}

function exitWith(message: string): never {
  process.stderr.write(`${message}\n`)
  process.exit(1)
}

/**
 * On SIGTERM or SIGINT, `stop` once, then exit: 0 when it finished, 1 when a
 * step failed (closeSteps has logged which).
 */
export function stopOnSignals(logger: Logger, what: string, stop: () => Promise<void>): void {
  let stopping = false
  const onSignal = (signal: string) => {
    if (stopping) return
    stopping = true
    logger.info({ signal }, `shutting down: ${what}`)
    stop()
      .then(() => process.exit(0))
      .catch((err: unknown) => {
        logger.error({ err }, 'shutdown failed')
        process.exit(1)
      })
  }
  process.on('SIGTERM', () => onSignal('SIGTERM'))
  process.on('SIGINT', () => onSignal('SIGINT'))
}
