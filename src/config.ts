import { z } from 'zod'

/**
 * Service configuration, parsed once from the environment. Everything else
 * receives a `Config` as an argument; tests pass plain objects.
 */
const intFromEnv = (def: number, min: number, max: number) =>
  z.coerce.number().int().min(min).max(max).default(def)

const boolFromEnv = (def: boolean) =>
  z
    .enum(['true', 'false', '1', '0'])
    .default(def ? 'true' : 'false')
    .transform((v) => v === 'true' || v === '1')

export const ConfigSchema = z.object({
  PORT: intFromEnv(8080, 0, 65535),
  /** Default depends on whether API keys are configured (see loadConfig). */
  HOST: z.string().min(1).optional(),
  REDIS_URL: z.string().url().default('redis://127.0.0.1:6379'),
  /** Prefix of every Redis key this service writes (queue and storage). */
  REDIS_PREFIX: z.string().min(1).max(64).regex(/^[A-Za-z0-9:_-]+$/).default('almanac'),
  /**
   * Comma-separated `host:port` seed nodes of a Redis Cluster; when set, the service
   * connects to the cluster instead of REDIS_URL (which still supplies the username,
   * password and TLS). Unset: one Redis server at REDIS_URL.
   */
  REDIS_CLUSTER_NODES: z
    .string()
    .optional()
    .transform((text, ctx) => {
      if (text === undefined || text.trim() === '') return undefined
      const nodes: RedisNode[] = []
      text.split(',').forEach((raw, i) => {
        const node = parseRedisNode(raw.trim())
        if (node === null) ctx.addIssue({ code: 'custom', message: `entry ${i + 1} (${JSON.stringify(raw.trim())}) is not host:port with a port of 1-65535` })
        else nodes.push(node)
      })
      return nodes
    }),
  /** Comma-separated `tenant:key` pairs. */
  API_KEYS: z.string().optional(),
  /** File with one `tenant:key` pair per line (# comments allowed). */
  API_KEYS_FILE: z.string().optional(),
  /** Series per chunk job. */
  CHUNK_SIZE: intFromEnv(500, 1, 100_000),
  /** Chunk jobs processed at once per worker process (each on its own worker thread). */
  WORKER_CONCURRENCY: intFromEnv(0, 0, 256),
  /** How long a worker holds a chunk's lock before another may take it over (renewed while alive). */
  WORKER_LOCK_DURATION_MS: intFromEnv(30_000, 1000, 3_600_000),
  /** How often workers look for chunks whose worker died (stalled) and requeue them. */
  WORKER_STALLED_INTERVAL_MS: intFromEnv(30_000, 500, 3_600_000),
  /** Start an in-process worker with the API (npm start). */
  RUN_WORKER: boolFromEnv(true),
  /** How long run results are kept, in seconds. */
  RESULT_RETENTION_SECONDS: intFromEnv(14 * 24 * 3600, 60, 366 * 24 * 3600),
  /** Largest accepted request body, in bytes. */
  BODY_LIMIT_BYTES: intFromEnv(64 * 1024 * 1024, 1024, 1024 * 1024 * 1024),
  /** Longest a client may take to send a whole request (headers and body) before a 408; slow clients are cut off. */
  REQUEST_TIMEOUT_MS: intFromEnv(120_000, 1000, 3_600_000),
  /** Most series accepted by the synchronous POST /v1/forecast. */
  SYNC_MAX_SERIES: intFromEnv(100, 1, 10_000),
  /** Requests per tenant per window. */
  RATE_LIMIT_MAX: intFromEnv(600, 1, 1_000_000),
  RATE_LIMIT_WINDOW_MS: intFromEnv(60_000, 1000, 3_600_000),
  LOG_LEVEL: z.enum(['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent']).default('info'),
  /** Callback delivery: attempts in all, first retry delay (doubling after), per-request timeout. */
  CALLBACK_ATTEMPTS: intFromEnv(5, 1, 20),
  CALLBACK_BACKOFF_MS: intFromEnv(30_000, 10, 3_600_000),
  CALLBACK_TIMEOUT_MS: intFromEnv(10_000, 100, 120_000),
  /** Let callbacks reach loopback and private addresses (off: SSRF protection). */
  CALLBACK_ALLOW_PRIVATE_NETWORKS: boolFromEnv(false),
  /** Closest two firings of one schedule may be, in seconds. */
  SCHEDULE_MIN_INTERVAL_SECONDS: intFromEnv(300, 1, 86_400),
  /** How long a feed batch id of a history upload is remembered, so a resent batch is not added twice. */
  UPLOAD_BATCH_TTL_SECONDS: intFromEnv(35 * 24 * 3600, 60, 366 * 24 * 3600),
})

/** One seed node of a Redis Cluster. */
export interface RedisNode {
  readonly host: string
  readonly port: number
}

/** `host:port`, `[ipv6]:port`; null when malformed. */
export function parseRedisNode(text: string): RedisNode | null {
  const m = /^(?:\[([0-9A-Fa-f:.]+)\]|([A-Za-z0-9._-]+)):(\d{1,5})$/.exec(text)
  const port = m ? Number(m[3]) : 0
  if (!m || port < 1 || port > 65535) return null
  return { host: (m[1] ?? m[2])!, port }
}

export interface Config {
  readonly port: number
  readonly host: string
  readonly redisUrl: string
  /** Prefix of the service's own keys (storage); never contains braces. */
  readonly redisPrefix: string
  /** Seed nodes of a Redis Cluster; absent or empty means one Redis server at redisUrl. */
  readonly redisClusterNodes?: readonly RedisNode[]
  /**
   * Prefix of the BullMQ queues' keys; redisPrefix when absent. On a cluster
   * `{redisPrefix}`: BullMQ's scripts touch several keys of a queue at once,
   * so the whole prefix must be one hash tag.
   */
  readonly queuePrefix?: string
  /** tenant -> list of SHA-256 hex digests of its keys; empty means auth is off. */
  readonly apiKeys: ReadonlyMap<string, readonly string[]>
  readonly chunkSize: number
  /** 0 means one per core. */
  readonly workerConcurrency: number
  readonly runWorker: boolean
  /** Chunk lock duration; default 30000 when absent. */
  readonly workerLockDurationMs?: number
  /** Stalled-chunk check interval; default 30000 when absent. */
  readonly workerStalledIntervalMs?: number
  readonly resultRetentionSeconds: number
  readonly bodyLimitBytes: number
  /** Time to receive a whole request before a 408; default 120000 when absent. */
  readonly requestTimeoutMs?: number
  readonly syncMaxSeries: number
  readonly rateLimitMax: number
  readonly rateLimitWindowMs: number
  readonly logLevel: z.infer<typeof ConfigSchema>['LOG_LEVEL']
  /** Callback delivery attempts; default 5 when absent. */
  readonly callbackAttempts?: number
  /** Delay before the first callback retry, doubling after; default 30000 when absent. */
  readonly callbackBackoffMs?: number
  /** Timeout of one callback request; default 10000 when absent. */
  readonly callbackTimeoutMs?: number
  /** Callbacks may call loopback and private addresses; default false when absent. */
  readonly callbackAllowPrivateNetworks?: boolean
  /** Closest two firings of a schedule may be; default 300 when absent. */
  readonly scheduleMinIntervalSeconds?: number
  /** How long a history upload's feed batch id is remembered (default 35 days). */
  readonly uploadBatchTtlSeconds?: number
}

export class ConfigError extends Error {
  override readonly name = 'ConfigError'
  constructor(readonly problems: readonly string[]) {
    super(`invalid configuration:\n  ${problems.join('\n  ')}`)
  }
}

/**
 * Parse `tenant:key` pairs. Keys are kept only as SHA-256 digests.
 * @throws ConfigError listing every malformed entry.
 */
export function parseApiKeys(
  text: string,
  separator: RegExp,
  hash: (key: string) => string,
): Map<string, string[]> {
  const keys = new Map<string, string[]>()
  const problems: string[] = []
  text
    .split(separator)
    .map((s) => s.trim())
    .filter((s) => s.length > 0 && !s.startsWith('#'))
    .forEach((entry, i) => {
      const at = entry.indexOf(':')
      const tenant = at > 0 ? entry.slice(0, at) : ''
      const key = at > 0 ? entry.slice(at + 1) : ''
      if (!/^[A-Za-z0-9_-]{1,64}$/.test(tenant) || key.length < 16) {
        problems.push(`API key entry ${i + 1}: expected tenant:key with a tenant of [A-Za-z0-9_-] and a key of 16+ characters`)
        return
      }
      keys.set(tenant, [...(keys.get(tenant) ?? []), hash(key)])
    })
  if (problems.length > 0) throw new ConfigError(problems)
  return keys
}

/**
 * Build a Config from an environment map and a file reader (injected so tests
 * need neither process.env nor the file system).
 * @throws ConfigError listing every problem.
 */
export function loadConfig(
  env: Readonly<Record<string, string | undefined>>,
  deps: { readFile: (path: string) => string; hash: (key: string) => string },
): Config {
  const parsed = ConfigSchema.safeParse(env)
  if (!parsed.success) {
    throw new ConfigError(parsed.error.issues.map((i) => `${i.path.join('.') || '(env)'}: ${i.message}`))
  }
  const e = parsed.data
  const apiKeys = new Map<string, string[]>()
  const merge = (m: Map<string, string[]>) => {
    for (const [t, ks] of m) apiKeys.set(t, [...(apiKeys.get(t) ?? []), ...ks])
  }
  if (e.API_KEYS) merge(parseApiKeys(e.API_KEYS, /,/, deps.hash))
  if (e.API_KEYS_FILE) {
    let text: string
    try {
      text = deps.readFile(e.API_KEYS_FILE)
    } catch (err) {
      throw new ConfigError([`API_KEYS_FILE: cannot read (${(err as Error).message})`])
    }
    merge(parseApiKeys(text, /\r?\n/, deps.hash))
  }
  if (e.REDIS_CLUSTER_NODES && !/^\/?0?$/.test(new URL(e.REDIS_URL).pathname)) {
    throw new ConfigError(['REDIS_URL: a Redis Cluster has only database 0; drop the database number when REDIS_CLUSTER_NODES is set'])
  }
  if (apiKeys.size === 0 && e.HOST !== undefined && !isLoopback(e.HOST)) {
    throw new ConfigError([
      `HOST: ${e.HOST} would open the service to the network without authentication; set API_KEYS or API_KEYS_FILE, or listen on 127.0.0.1`,
    ])
  }
  return {
    port: e.PORT,
    // Without keys the service is open, so it only listens on loopback unless told otherwise.
    host: e.HOST ?? (apiKeys.size === 0 ? '127.0.0.1' : '0.0.0.0'),
    redisUrl: e.REDIS_URL,
    redisPrefix: e.REDIS_PREFIX,
    ...(e.REDIS_CLUSTER_NODES ? { redisClusterNodes: e.REDIS_CLUSTER_NODES, queuePrefix: `{${e.REDIS_PREFIX}}` } : {}),
    apiKeys,
    chunkSize: e.CHUNK_SIZE,
    workerConcurrency: e.WORKER_CONCURRENCY,
    runWorker: e.RUN_WORKER,
    workerLockDurationMs: e.WORKER_LOCK_DURATION_MS,
    workerStalledIntervalMs: e.WORKER_STALLED_INTERVAL_MS,
    resultRetentionSeconds: e.RESULT_RETENTION_SECONDS,
    bodyLimitBytes: e.BODY_LIMIT_BYTES,
    requestTimeoutMs: e.REQUEST_TIMEOUT_MS,
    syncMaxSeries: e.SYNC_MAX_SERIES,
    rateLimitMax: e.RATE_LIMIT_MAX,
    rateLimitWindowMs: e.RATE_LIMIT_WINDOW_MS,
    logLevel: e.LOG_LEVEL,
    callbackAttempts: e.CALLBACK_ATTEMPTS,
    callbackBackoffMs: e.CALLBACK_BACKOFF_MS,
    callbackTimeoutMs: e.CALLBACK_TIMEOUT_MS,
    callbackAllowPrivateNetworks: e.CALLBACK_ALLOW_PRIVATE_NETWORKS,
    scheduleMinIntervalSeconds: e.SCHEDULE_MIN_INTERVAL_SECONDS,
    uploadBatchTtlSeconds: e.UPLOAD_BATCH_TTL_SECONDS,
  }
}

/** The prefix BullMQ queues use (see Config.queuePrefix). */
export function queuePrefix(config: Pick<Config, 'redisPrefix' | 'queuePrefix'>): string {
  return config.queuePrefix ?? config.redisPrefix
}

/** 127.0.0.0/8, ::1 and localhost: addresses only this machine can reach. */
export function isLoopback(host: string): boolean {
  return host === 'localhost' || host === '::1' || /^127(\.\d{1,3}){3}$/.test(host)
}
