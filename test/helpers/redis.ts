import { randomBytes } from 'node:crypto'
import { Redis } from 'ioredis'

/**
 * Redis for integration tests.
 *
 *   const url = await redisUrlForTests()        // REDIS_URL, else a testcontainers Redis
 *   const prefix = uniquePrefix('runs-lifecycle') // one per test file
 *   afterAll(() => deleteKeys(url, prefix))      // SCAN MATCH prefix* + UNLINK
 *
 * Never skips: without REDIS_URL and without a Docker engine it throws.
 */

let containerUrl: Promise<string> | undefined

export async function redisUrlForTests(): Promise<string> {
  const fromEnv = process.env.REDIS_URL
  if (fromEnv) return fromEnv
  containerUrl ??= startContainer()
  return containerUrl
}

async function startContainer(): Promise<string> {
  try {
    const { RedisContainer } = await import('@testcontainers/redis')
    // testcontainers' reaper removes the container when the test process exits.
    const container = await new RedisContainer('redis:7-alpine').start()
    return container.getConnectionUrl()
  } catch (err) {
    throw new Error(
      'Integration tests need Redis: set REDIS_URL=redis://127.0.0.1:6379 or run a Docker engine for testcontainers' +
        ` (${(err as Error).message.split('\n')[0]})`,
      { cause: err },
    )
  }
}

/** A key prefix no other test file or run uses, e.g. `test-runs-lifecycle-1a2b3c4d`. */
export function uniquePrefix(name: string): string {
  return `test-${name.replace(/[^A-Za-z0-9_-]/g, '-')}-${randomBytes(4).toString('hex')}`
}

/** Deletes every key starting with `prefix`; returns how many were deleted. */
export async function deleteKeys(url: string, prefix: string): Promise<number> {
  const redis = new Redis(url, { maxRetriesPerRequest: 1 })
  try {
    let deleted = 0
    let cursor = '0'
    do {
      const [next, keys] = await redis.scan(cursor, 'MATCH', `${prefix}*`, 'COUNT', 1000)
      cursor = next
      if (keys.length > 0) deleted += await redis.unlink(...keys)
    } while (cursor !== '0')
    return deleted
  } finally {
    redis.disconnect()
  }
}
