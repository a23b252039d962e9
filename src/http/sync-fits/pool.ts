import { availableParallelism } from 'node:os'
import Tinypool from 'tinypool'
import type { ResultItem } from '../../runs/contract.js'
import { FIT_TIME_LIMIT } from '../../runs/failures.js'
import type { RunSettings, SeriesItem } from '../../schemas/run.js'
import type { FitOutcome, FitTask } from './fit-thread.js'

/** Fits series of POST /v1/forecast off the event loop. */
export interface SyncFitter {
  /** One series as a result item; past the time limit, an item with failure `fit-time-limit`. */
  fit(settings: RunSettings, series: SeriesItem): Promise<FitOutcome>
  close(): Promise<void>
}

export interface SyncFitPoolOptions {
  /** Threads at most; 0: half the cores, at least one. */
  readonly threads: number
  /** Longest one series may fit before its thread is ended. */
  readonly seriesTimeoutMs: number
}

/**
 * The task module each thread loads: compiled JavaScript beside this file in
 * production (dist/), or, when this file runs from source (tests, tsx), the
 * TypeScript task behind an entry that registers tsx on the thread first.
 */
function taskFile(): URL {
  return import.meta.url.endsWith('.ts') ? new URL('./fit-thread-entry.mjs', import.meta.url) : new URL('./fit-thread.js', import.meta.url)
}

/**
 * A pool of worker threads (tinypool) for synchronous fits. A fit that runs
 * past the limit has its thread ended (the engine is synchronous and cannot
 * be interrupted any other way); the pool starts a fresh one. The limit counts
 * from the moment the thread starts the fit, not from when the task was
 * queued, so waiting behind other requests never fails a series.
 */
export function createSyncFitPool(options: SyncFitPoolOptions): SyncFitter {
  const maxThreads = options.threads > 0 ? options.threads : Math.max(1, Math.floor(availableParallelism() / 2))
  const pool = new Tinypool({
    filename: taskFile().href,
    minThreads: 0,
    maxThreads,
    idleTimeout: 30_000,
    // A thread's heap stays bounded whatever one series asks for (at most MAX_POINTS_PER_SERIES points).
    resourceLimits: { maxOldGenerationSizeMb: 256, maxYoungGenerationSizeMb: 24 },
  })
  const limitMs = options.seriesTimeoutMs

  return {
    async fit(settings, series) {
      const startedAt = new Float64Array(new SharedArrayBuffer(8))
      const abort = new AbortController()
      // Until the thread has started the fit, look again every so often; then end it once it has run for the limit.
      const check = () => {
        const since = startedAt[0] ?? 0
        const left = since === 0 ? Math.min(limitMs, 1000) : since + limitMs - Date.now()
        if (left <= 0) abort.abort()
        else timer = setTimeout(check, left)
      }
      let timer = setTimeout(check, Math.min(limitMs, 1000))
      try {
        const task: FitTask = { settings, series, startedAt }
        return (await pool.run(task, { signal: abort.signal })) as FitOutcome
      } catch (err) {
        if (!abort.signal.aborted) throw err
        return { item: timeLimitItem(settings, series, limitMs), seconds: limitMs / 1000 }
      } finally {
        clearTimeout(timer)
      }
    },
    close: () => pool.destroy(),
  }
}

function timeLimitItem(settings: RunSettings, series: SeriesItem, limitMs: number): ResultItem {
  return {
    sku: series.sku,
    frequency: series.frequency ?? settings.frequency,
    failure: {
      code: FIT_TIME_LIMIT,
      message: `fitting took longer than the ${limitMs} ms a synchronous forecast allows one series; forecast it in a run (POST /v1/runs)`,
    },
  }
}
