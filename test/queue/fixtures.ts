import type { Config } from '../../src/config.js'
import type { RunRequest, SeriesItem } from '../../src/schemas/run.js'

/** Config for run-machinery tests: a plain object, as loadConfig would build it. */
export function runsTestConfig(redisUrl: string, redisPrefix: string, overrides: Partial<Config> = {}): Config {
  return {
    port: 0,
    host: '127.0.0.1',
    redisUrl,
    redisPrefix,
    apiKeys: new Map(),
    chunkSize: 10,
    workerConcurrency: 2,
    runWorker: false,
    // One lane, so tests that look into the chunk queue see every chunk there (the express lane has its own test).
    expressMaxSeries: 0,
    workerLockDurationMs: 30_000,
    workerStalledIntervalMs: 30_000,
    resultRetentionSeconds: 3600,
    bodyLimitBytes: 1024 * 1024,
    syncMaxSeries: 100,
    rateLimitMax: 1000,
    rateLimitWindowMs: 60_000,
    logLevel: 'silent',
    ...overrides,
  }
}

/**
 * Synthetic monthly demand for machinery tests (queueing, counting, paging):
 * level + trend + a yearly wave + a deterministic wobble. Forecast accuracy is
 * tested in test/engine against published references, not with these.
 */
export function syntheticSeries(count: number, length = 36, skuPrefix = 'SKU'): SeriesItem[] {
  return Array.from({ length: count }, (_, i) => ({
    sku: `${skuPrefix}-${String(i).padStart(5, '0')}`,
    demand: Array.from(
      { length },
      (_, t) => 40 + (i % 17) + 0.3 * t + 8 * Math.sin((2 * Math.PI * (t + i)) / 12) + ((t * 7 + i) % 5),
    ),
  }))
}

export function runRequest(series: SeriesItem[], settings: Partial<Omit<RunRequest, 'series'>> = {}): RunRequest {
  return {
    horizon: 6,
    frequency: 'month',
    rankBy: 'mase',
    intervalLevels: [80, 95],
    missingPeriods: 'zero',
    allowNegativeDemand: false,
    keepLeadingZeros: false,
    holdoutOrigins: 1,
    ...settings,
    series,
  }
}

/** Polls `check` until it returns a value other than undefined, or fails after `timeoutMs`. */
export async function waitFor<T>(check: () => Promise<T | undefined>, timeoutMs = 30_000, what = 'condition'): Promise<T> {
  const deadline = Date.now() + timeoutMs
  for (;;) {
    const v = await check()
    if (v !== undefined) return v
    if (Date.now() > deadline) throw new Error(`timed out after ${timeoutMs} ms waiting for ${what}`)
    await new Promise((r) => setTimeout(r, 100))
  }
}
