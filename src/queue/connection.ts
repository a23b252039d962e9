import { Redis, type RedisOptions } from 'ioredis'

/**
 * Redis connections of the run machinery. Workers need
 * `maxRetriesPerRequest: null` (BullMQ blocks on the connection and must never
 * give up a command); the gateway fails fast instead so HTTP requests do not hang.
 */
export function workerConnection(url: string, extra: RedisOptions = {}): Redis {
  return new Redis(url, { maxRetriesPerRequest: null, ...extra })
}

export function gatewayConnection(url: string, extra: RedisOptions = {}): Redis {
  return new Redis(url, { maxRetriesPerRequest: 2, connectTimeout: 5000, ...extra })
}

/** Hides credentials in a Redis URL for messages and logs. */
export function redactUrl(url: string): string {
  try {
    const u = new URL(url)
    if (u.password) u.password = '***'
    return u.toString().replace(/\/$/, '')
  } catch {
    return '(unparseable REDIS_URL)'
  }
}

/**
 * Resolves when Redis answers PING within `timeoutMs`; otherwise rejects with
 * one line saying what to start.
 */
export async function assertRedisReachable(url: string, timeoutMs = 3000): Promise<void> {
  const probe = new Redis(url, {
    lazyConnect: true,
    maxRetriesPerRequest: 0,
    connectTimeout: timeoutMs,
    retryStrategy: () => null,
    enableOfflineQueue: false,
  })
  probe.on('error', () => {})
  try {
    await probe.connect()
    await probe.ping()
  } catch {
    throw new Error(`Redis is not reachable at ${redactUrl(url)}: start it (redis-server) or set REDIS_URL`)
  } finally {
    probe.disconnect()
  }
}
