import type { Config } from '../src/config.js'
import type { RunGateway } from '../src/runs/contract.js'

/**
 * The settings of a benchmark that builds the app in its own process: no API keys,
 * no worker, a rate limit it never reaches, quiet logs. `overrides` set what the
 * benchmark measures (its body limit, chunk size...).
 */
export function benchConfig(redisUrl: string, prefix: string, overrides: Partial<Config> = {}): Config {
  return {
    port: 0,
    host: '127.0.0.1',
    redisUrl,
    redisPrefix: prefix,
    apiKeys: new Map(),
    chunkSize: 500,
    workerConcurrency: 1,
    runWorker: false,
    resultRetentionSeconds: 3600,
    bodyLimitBytes: 64 * 1024 * 1024,
    syncMaxSeries: 100,
    rateLimitMax: 1_000_000,
    rateLimitWindowMs: 60_000,
    logLevel: 'silent',
    ...overrides,
  }
}

/** A run gateway for a benchmark that never submits runs: any call fails, naming the benchmark. */
export function noRunGateway(bench: string): RunGateway {
  const unused = (): never => {
    throw new Error(`the ${bench} benchmark never calls the run gateway`)
  }
  return { submit: unused, get: unused, results: unused, cancel: unused, latestForecast: unused, ping: unused, stats: unused }
}
