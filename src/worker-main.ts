import { readFileSync } from 'node:fs'
import { createHash } from 'node:crypto'
import { ConfigError, loadConfig } from './config.js'
import { createLogger } from './logger.js'
import { assertRedisReachable } from './queue/connection.js'
import { startWorkers } from './queue/worker.js'

/**
 * `npm run worker`: chunk workers only, against the same Redis as the API.
 * Run more of these processes (on more machines) to add capacity; each one
 * uses every core through its worker-thread pool.
 */
async function main(): Promise<void> {
  let config
  try {
    config = loadConfig(process.env, {
      readFile: (path) => readFileSync(path, 'utf8'),
      hash: (key) => createHash('sha256').update(key).digest('hex'),
    })
  } catch (err) {
    if (err instanceof ConfigError) {
      process.stderr.write(`${err.message}\n`)
      process.exit(1)
    }
    throw err
  }
  try {
    await assertRedisReachable(config)
  } catch (err) {
    process.stderr.write(`${(err as Error).message}\n`)
    process.exit(1)
  }
  const logger = createLogger({ level: config.logLevel })
  const workers = startWorkers(config, logger)

  let stopping = false
  const stop = (signal: string) => {
    if (stopping) return
    stopping = true
    logger.info({ signal }, 'shutting down: letting in-flight chunks finish')
    workers
      .close()
      .then(() => process.exit(0))
      .catch((err) => {
        logger.error({ err }, 'shutdown failed')
        process.exit(1)
      })
  }
  process.on('SIGTERM', () => stop('SIGTERM'))
  process.on('SIGINT', () => stop('SIGINT'))
}

void main()
