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

/**
 * Default requests per tenant per minute. A dashboard polling 50 runs once a
 * second is 3,000 a minute even if every answer changed (unchanged ones, 304,
 * are not counted at all); twice that leaves room for the tenant's other calls.
 */
export const DEFAULT_RATE_LIMIT_MAX = 6000

/** 8 MiB: uploads up to a few hundred thousand rows never touch Redis staging. */
export const DEFAULT_UPLOAD_SPILL_BYTES = 8 * 1024 * 1024

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
  /** Runs of at most this many series take the express lane (a worker thread of their own); 0: no express lane. */
  EXPRESS_MAX_SERIES: intFromEnv(50, 0, 100_000),
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
  /** Most fitting work one POST /v1/forecast may ask for: points x season length x holdout origins x candidate models, summed over its series. */
  SYNC_MAX_COST: intFromEnv(50_000_000, 1, 1_000_000_000_000),
  /** Longest one series may fit in POST /v1/forecast before it is stopped and answered as a failed item. */
  SYNC_SERIES_TIMEOUT_MS: intFromEnv(10_000, 100, 600_000),
  /** Threads fitting POST /v1/forecast's series; 0: half the cores, at least one. */
  SYNC_FIT_THREADS: intFromEnv(0, 0, 256),
  /** How long GET /metrics reuses the queue and run figures it read from Redis; 0 reads them on every scrape. */
  METRICS_CACHE_MS: intFromEnv(5000, 0, 300_000),
  /** When set, GET /metrics needs `Authorization: Bearer <this token>` (at least 16 characters). */
  METRICS_TOKEN: z.string().min(16).optional(),
  /** Requests per tenant per window (304 answers and static files are not counted). */
  RATE_LIMIT_MAX: intFromEnv(DEFAULT_RATE_LIMIT_MAX, 1, 1_000_000),
  RATE_LIMIT_WINDOW_MS: intFromEnv(60_000, 1000, 3_600_000),
  /** Failed authentications per client address per window before further attempts get 429. */
  AUTH_FAILURE_MAX: intFromEnv(20, 1, 1_000_000),
  AUTH_FAILURE_WINDOW_MS: intFromEnv(60_000, 1000, 3_600_000),
  /** Most SKUs with a stored history per tenant; uploads and PUTs past it are refused. */
  QUOTA_SKUS_PER_TENANT: intFromEnv(250_000, 1, 100_000_000),
  /** Most bytes of stored history (demand and metadata) per tenant; 0: no quota. Writes that would grow past it are refused. */
  QUOTA_STORED_BYTES_PER_TENANT: intFromEnv(2 * 1024 ** 3, 0, Number.MAX_SAFE_INTEGER),
  /** Bytes of a streamed upload's rows held in the API's memory before they are staged in Redis. */
  UPLOAD_SPILL_BYTES: intFromEnv(DEFAULT_UPLOAD_SPILL_BYTES, 64 * 1024, 1024 ** 3),
  /** Most SKUs a schedule's scope.skus may name (larger selections: use tags or all). */
  SCHEDULE_MAX_SKUS: intFromEnv(1000, 1, 100_000),
  LOG_LEVEL: z.enum(['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent']).default('info'),
  /** Callback delivery: attempts in all, first retry delay (doubling after), per-request timeout. */
  CALLBACK_ATTEMPTS: intFromEnv(5, 1, 20),
  CALLBACK_BACKOFF_MS: intFromEnv(30_000, 10, 3_600_000),
  CALLBACK_TIMEOUT_MS: intFromEnv(10_000, 100, 120_000),
  /** Let callbacks reach loopback and private addresses (off: SSRF protection). */
  CALLBACK_ALLOW_PRIVATE_NETWORKS: boolFromEnv(false),
  /** Closest two firings of one schedule may be, in seconds. */
  SCHEDULE_MIN_INTERVAL_SECONDS: intFromEnv(300, 1, 86_400),
  /** Published forecasts kept per SKU, newest first, for accuracy at a fixed lag (docs/feeds.md). */
  PUBLISHED_FORECASTS_KEPT: intFromEnv(12, 1, 120),
  /** Worklist: a newly published forecast whose summed common periods moved this many percent or more is a large change (docs/workbench.md). */
  WORKLIST_CHANGE_PERCENT: intFromEnv(25, 1, 1000),
  /** How long a feed batch id of a history upload is remembered, so a resent batch is not added twice. */
  UPLOAD_BATCH_TTL_SECONDS: intFromEnv(35 * 24 * 3600, 60, 366 * 24 * 3600),
  // Idle-history retention (issue 14, finding 9; src/retention/).
  /**
   * Days after its last write (PUT, upload, a closing carrying it forward) a SKU's history and
   * records are removed; 0: kept forever. Off by default: histories are an ERP's master data.
   */
  HISTORY_IDLE_DAYS: intFromEnv(0, 0, 36_500),
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

export const DEFAULT_QUOTA_SKUS_PER_TENANT = 250_000
export const DEFAULT_QUOTA_STORED_BYTES_PER_TENANT = 2 * 1024 ** 3
export const DEFAULT_SCHEDULE_MAX_SKUS = 1000

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
  /** Largest run (series) that takes the express lane; 0 turns it off; default 50 when absent. */
  readonly expressMaxSeries?: number
  /** Chunk lock duration; default 30000 when absent. */
  readonly workerLockDurationMs?: number
  /** Stalled-chunk check interval; default 30000 when absent. */
  readonly workerStalledIntervalMs?: number
  readonly resultRetentionSeconds: number
  readonly bodyLimitBytes: number
  /** Time to receive a whole request before a 408; default 120000 when absent. */
  readonly requestTimeoutMs?: number
  readonly syncMaxSeries: number
  /** Most fitting work of one sync forecast (see fit-cost.ts); default 50,000,000 when absent. */
  readonly syncMaxCost?: number
  /** Longest fit of one series in a sync forecast; default 10000 when absent. */
  readonly syncSeriesTimeoutMs?: number
  /** Sync-fit threads; 0 or absent: half the cores, at least one. */
  readonly syncFitThreads?: number
  /** GET /metrics reuses Redis figures this long; default 5000 when absent. */
  readonly metricsCacheMs?: number
  /** Bearer token GET /metrics requires; absent: open (keep the port private). */
  readonly metricsToken?: string
  readonly rateLimitMax: number
  readonly rateLimitWindowMs: number
  /** Failed authentications per client address per window; default 20 when absent. */
  readonly authFailureMax?: number
  /** Window of authFailureMax; default 60000 when absent. */
  readonly authFailureWindowMs?: number
  /** Most stored SKUs per tenant; default DEFAULT_QUOTA_SKUS_PER_TENANT when absent. */
  readonly quotaSkusPerTenant?: number
  /** Most bytes of stored history per tenant (0: none); default DEFAULT_QUOTA_STORED_BYTES_PER_TENANT when absent. */
  readonly quotaStoredBytesPerTenant?: number
  /** Most SKUs in a schedule's scope.skus; default DEFAULT_SCHEDULE_MAX_SKUS when absent. */
  readonly scheduleMaxSkus?: number
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
  /** Published forecasts kept per SKU for accuracy at a fixed lag; default 12 when absent. */
  readonly publishedForecastsKept?: number
  /** Worklist large-change threshold in percent; default 25 (our default, not a standard) when absent. */
  readonly worklistChangePercent?: number
  /** How long a history upload's feed batch id is remembered (default 35 days). */
  readonly uploadBatchTtlSeconds?: number
  /** Bytes of a streamed upload's rows held in memory before staging in Redis; default DEFAULT_UPLOAD_SPILL_BYTES. */
  readonly uploadSpillBytes?: number
  // Idle-history retention (src/retention/).
  /** Days without a write after which a SKU is removed; 0 or absent: kept forever. */
  readonly historyIdleDays?: number
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
      // The auth header carries the key as one token of visible ASCII: any other key could never match.
      if (!/^[\x21-\x7e]+$/.test(key)) {
        problems.push(`API key entry ${i + 1}: the key of tenant ${tenant} holds spaces or characters other than visible ASCII, so no request could send it`)
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
  // Set but without a single key would silently turn authentication off: refused. An empty value counts as unset.
  if (e.API_KEYS) {
    const keys = parseApiKeys(e.API_KEYS, /,/, deps.hash)
    if (keys.size === 0) throw new ConfigError(['API_KEYS: set but holds no tenant:key entry; unset it to run without authentication'])
    merge(keys)
  }
  if (e.API_KEYS_FILE) {
    let text: string
    try {
      text = deps.readFile(e.API_KEYS_FILE)
    } catch (err) {
      throw new ConfigError([`API_KEYS_FILE: cannot read (${(err as Error).message})`])
    }
    const keys = parseApiKeys(text, /\r?\n/, deps.hash)
    if (keys.size === 0) throw new ConfigError(['API_KEYS_FILE: holds no tenant:key entry (only blanks or comments); unset it to run without authentication'])
    merge(keys)
  }
  const duplicates = duplicateKeys(apiKeys)
  if (duplicates.length > 0) throw new ConfigError(duplicates)
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
    expressMaxSeries: e.EXPRESS_MAX_SERIES,
    workerLockDurationMs: e.WORKER_LOCK_DURATION_MS,
    workerStalledIntervalMs: e.WORKER_STALLED_INTERVAL_MS,
    resultRetentionSeconds: e.RESULT_RETENTION_SECONDS,
    bodyLimitBytes: e.BODY_LIMIT_BYTES,
    requestTimeoutMs: e.REQUEST_TIMEOUT_MS,
    syncMaxSeries: e.SYNC_MAX_SERIES,
    syncMaxCost: e.SYNC_MAX_COST,
    syncSeriesTimeoutMs: e.SYNC_SERIES_TIMEOUT_MS,
    syncFitThreads: e.SYNC_FIT_THREADS,
    metricsCacheMs: e.METRICS_CACHE_MS,
    ...(e.METRICS_TOKEN === undefined ? {} : { metricsToken: e.METRICS_TOKEN }),
    rateLimitMax: e.RATE_LIMIT_MAX,
    rateLimitWindowMs: e.RATE_LIMIT_WINDOW_MS,
    authFailureMax: e.AUTH_FAILURE_MAX,
    authFailureWindowMs: e.AUTH_FAILURE_WINDOW_MS,
    quotaSkusPerTenant: e.QUOTA_SKUS_PER_TENANT,
    quotaStoredBytesPerTenant: e.QUOTA_STORED_BYTES_PER_TENANT,
    scheduleMaxSkus: e.SCHEDULE_MAX_SKUS,
    logLevel: e.LOG_LEVEL,
    callbackAttempts: e.CALLBACK_ATTEMPTS,
    callbackBackoffMs: e.CALLBACK_BACKOFF_MS,
    callbackTimeoutMs: e.CALLBACK_TIMEOUT_MS,
    callbackAllowPrivateNetworks: e.CALLBACK_ALLOW_PRIVATE_NETWORKS,
    scheduleMinIntervalSeconds: e.SCHEDULE_MIN_INTERVAL_SECONDS,
    publishedForecastsKept: e.PUBLISHED_FORECASTS_KEPT,
    worklistChangePercent: e.WORKLIST_CHANGE_PERCENT,
    uploadBatchTtlSeconds: e.UPLOAD_BATCH_TTL_SECONDS,
    uploadSpillBytes: e.UPLOAD_SPILL_BYTES,
    historyIdleDays: e.HISTORY_IDLE_DAYS,
  }
}

/** One problem per key digest given more than once: the first tenant would win and the others never authenticate. */
function duplicateKeys(apiKeys: ReadonlyMap<string, readonly string[]>): string[] {
  const owners = new Map<string, string[]>()
  for (const [tenant, digests] of apiKeys) for (const d of digests) owners.set(d, [...(owners.get(d) ?? []), tenant])
  return [...owners.values()]
    .filter((tenants) => tenants.length > 1)
    .map((tenants) => `API keys: one key is given ${tenants.length} times (tenants ${[...new Set(tenants)].join(', ')}); every key must be unique`)
}

/** The prefix BullMQ queues use (see Config.queuePrefix). */
export function queuePrefix(config: Pick<Config, 'redisPrefix' | 'queuePrefix'>): string {
  return config.queuePrefix ?? config.redisPrefix
}

/** 127.0.0.0/8, ::1 and localhost: addresses only this machine can reach. */
export function isLoopback(host: string): boolean {
  return host === 'localhost' || host === '::1' || /^127(\.\d{1,3}){3}$/.test(host)
}
