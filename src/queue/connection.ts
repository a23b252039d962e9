import { Cluster, Redis, type ClusterOptions, type RedisOptions } from 'ioredis'
import type { Config } from '../config.js'
import type { RedisClient } from '../storage/redis-client.js'

/** Where Redis is: one server at `redisUrl`, or a cluster through seed nodes (config.ts). */
export type RedisTarget = Pick<Config, 'redisUrl' | 'redisClusterNodes'>

/**
 * Redis connections of the run machinery, the one place that opens them.
 * Workers need `maxRetriesPerRequest: null` (BullMQ blocks on the connection
 * and must never give up a command); the gateway fails fast instead so HTTP
 * requests do not hang. On a cluster the same options apply to the connection
 * to every node (BullMQ reads them from the cluster's `redisOptions`).
 */
export function workerConnection(target: RedisTarget, extra: RedisOptions = {}): RedisClient {
  return open(target, { maxRetriesPerRequest: null, ...extra })
}

export function gatewayConnection(target: RedisTarget, extra: RedisOptions = {}): RedisClient {
  return open(target, { maxRetriesPerRequest: 2, connectTimeout: 5000, ...extra })
}

/** True when the target is a Redis Cluster. */
export function isClusterTarget(target: RedisTarget): boolean {
  return (target.redisClusterNodes?.length ?? 0) > 0
}

function open(target: RedisTarget, options: RedisOptions, cluster: ClusterOptions = {}): RedisClient {
  if (!isClusterTarget(target)) return new Redis(target.redisUrl, options)
  return new Cluster(
    target.redisClusterNodes!.map((n) => ({ host: n.host, port: n.port })),
    { ...cluster, redisOptions: { ...credentialsOf(target.redisUrl), ...options } },
  )
}

/** Username, password and TLS of a Redis URL, which a cluster uses on every node. */
function credentialsOf(url: string): RedisOptions {
  const u = new URL(url)
  return {
    ...(u.username ? { username: decodeURIComponent(u.username) } : {}),
    ...(u.password ? { password: decodeURIComponent(u.password) } : {}),
    ...(u.protocol === 'rediss:' ? { tls: {} } : {}),
  }
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
 * Resolves when Redis answers PING within `timeoutMs` (on a cluster: when the
 * cluster's slot map was read and a node answered); otherwise rejects with one
 * line saying what to start.
 */
export async function assertRedisReachable(target: RedisTarget, timeoutMs = 3000): Promise<void> {
  const options: RedisOptions = { lazyConnect: true, maxRetriesPerRequest: 0, connectTimeout: timeoutMs, enableOfflineQueue: false }
  const probe = isClusterTarget(target)
    ? open(target, options, { lazyConnect: true, enableOfflineQueue: false, clusterRetryStrategy: () => null })
    : new Redis(target.redisUrl, { ...options, retryStrategy: () => null })
  probe.on('error', () => {})
  try {
    await withTimeout(probe.connect().then(() => probe.ping()), timeoutMs)
  } catch {
    throw new Error(
      isClusterTarget(target)
        ? `Redis Cluster is not reachable through ${target.redisClusterNodes!.map((n) => `${n.host}:${n.port}`).join(',')}: start it or set REDIS_CLUSTER_NODES`
        : `Redis is not reachable at ${redactUrl(target.redisUrl)}: start it (redis-server) or set REDIS_URL`,
    )
  } finally {
    probe.disconnect()
  }
}

function withTimeout<T>(p: Promise<T>, ms: number): Promise<T> {
  let timer: NodeJS.Timeout | undefined
  const late = new Promise<never>((_, reject) => {
    timer = setTimeout(() => reject(new Error(`no answer within ${ms} ms`)), ms)
  })
  return Promise.race([p, late]).finally(() => clearTimeout(timer))
}
