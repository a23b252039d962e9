import { Cluster, Redis, type ClusterOptions, type RedisOptions } from 'ioredis'
import type { Config } from '../config.js'
import { logErrors, type Logger } from '../logger.js'

/**
 * A connection to one Redis server or to a Redis Cluster. The stores use only
 * commands both offer, and only on keys a cluster accepts together (one slot
 * per call; see keys.ts).
 */
export type RedisClient = Redis | Cluster

/** Where Redis is: one server at `redisUrl`, or a cluster through seed nodes (config.ts). */
export type RedisTarget = Pick<Config, 'redisUrl' | 'redisClusterNodes'>

/**
 * The one place that opens Redis connections; each is closed by whoever
 * opened it, and its errors are logged as `name`. Workers need
 * `maxRetriesPerRequest: null` (BullMQ blocks on the connection and must never
 * give up a command); connections that answer HTTP requests fail fast instead
 * so requests do not hang. On a cluster the same options apply to the
 * connection to every node (BullMQ reads them from the cluster's
 * `redisOptions`).
 */
export function workerConnection(target: RedisTarget, log: Logger, name: string, extra: RedisOptions = {}): RedisClient {
  return watched(open(target, { maxRetriesPerRequest: null, ...extra }), log, name)
}

export function requestConnection(target: RedisTarget, log: Logger, name: string, extra: RedisOptions = {}): RedisClient {
  return watched(open(target, { maxRetriesPerRequest: 2, connectTimeout: 5000, ...extra }), log, name)
}

function watched(client: RedisClient, log: Logger, name: string): RedisClient {
  logErrors(client, log, `Redis connection ${name}`)
  return client
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
  // The probe's errors are the answer: the last one goes into the message.
  let lastError: Error | undefined
  probe.on('error', (err: Error) => {
    lastError = err
  })
  try {
    await withTimeout(probe.connect().then(() => probe.ping()), timeoutMs)
  } catch (err) {
    const cause = (lastError ?? (err as Error)).message
    throw new Error(
      isClusterTarget(target)
        ? `Redis Cluster is not reachable through ${target.redisClusterNodes!.map((n) => `${n.host}:${n.port}`).join(',')} (${cause}): start it or set REDIS_CLUSTER_NODES`
        : `Redis is not reachable at ${redactUrl(target.redisUrl)} (${redactCause(cause, target.redisUrl)}): start it (redis-server) or set REDIS_URL`,
      { cause: err },
    )
  } finally {
    probe.disconnect()
  }
}

/** An error message without the URL's password, should a client library quote the URL. */
function redactCause(message: string, url: string): string {
  try {
    const password = new URL(url).password
    return password ? message.split(password).join('***') : message
  } catch {
    return message
  }
}

function withTimeout<T>(p: Promise<T>, ms: number): Promise<T> {
  let timer: NodeJS.Timeout | undefined
  const late = new Promise<never>((_, reject) => {
    timer = setTimeout(() => reject(new Error(`no answer within ${ms} ms`)), ms)
  })
  return Promise.race([p, late]).finally(() => clearTimeout(timer))
}
