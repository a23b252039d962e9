import { forecastSeries } from '../../engine/index.js'
import { lowerThreadPriority } from '../../queue/thread-priority.js'
import type { ResultItem } from '../../runs/contract.js'
import { forecastItem } from '../../runs/forecast-sku.js'
import type { RunSettings, SeriesItem } from '../../schemas/run.js'

/** One synchronous fit, as posted to a pool thread. */
export interface FitTask {
  readonly settings: RunSettings
  readonly series: SeriesItem
  /** Shared with the API thread: [0] is set to Date.now() when the fit starts, so its time limit counts from then. */
  readonly startedAt: Float64Array
}

export interface FitOutcome {
  readonly item: ResultItem
  readonly seconds: number
}

// Fitting yields the cores to request handling (same as the chunk threads: queue/thread-priority.ts).
lowerThreadPriority()

/** Runs on a pool thread (sync-fits/pool.ts): forecast one series as the workers do. */
export default function fitOnThread(task: FitTask): FitOutcome {
  task.startedAt[0] = Date.now()
  const start = performance.now()
  const item = forecastItem(forecastSeries, task.settings, task.series)
  return { item, seconds: (performance.now() - start) / 1000 }
}
