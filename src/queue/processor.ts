import { UnrecoverableError, type Job } from 'bullmq'
import type { ForecastResult, SeriesInput } from '../engine/index.js'
import type { Logger } from '../logger.js'
import { forecastItem } from '../runs/forecast-sku.js'
import { withOpenPeriodsWarning } from '../runs/open-periods.js'
import { ChunkTallier } from '../runs/tally.js'
import { itemSignals, type WorklistSignals } from '../runs/worklist.js'
import { recordWorklist } from '../runs/worklist-service.js'
import { prepareItem, type PreparedItem } from '../storage/items/prepared-item.js'
import type { CommitOutcome, RunStore } from '../storage/runs/run-store.js'
import { CHUNK_QUEUE } from './names.js'
import { ChunkJob } from './payload.js'

export interface ChunkProcessorDeps {
  readonly store: RunStore
  /** The engine's forecastSeries. */
  readonly forecast: (input: SeriesInput) => ForecastResult
  readonly logger: Logger
  readonly now?: () => Date
  /** Called when this chunk finished its run (callbacks); must be idempotent per run. */
  readonly onRunEnded?: (tenant: string, runId: string) => Promise<void>
}

export interface ChunkOutcome {
  readonly outcome: CommitOutcome | 'skipped' | 'already-done'
  readonly series: number
  readonly failed: number
}

/**
 * The chunk job processor: reads the chunk's series, forecasts each, and
 * commits items and counts (idempotent per chunk; see RunStore.commitChunk). Chunks of
 * cancelled or failed runs are skipped. The commit writes the items and the
 * SKUs' latest-forecast records before it counts the chunk (run-store.ts), so a
 * run is never 'succeeded' before its results can be read. Steps after the
 * commit (run-ended event, deleting the input) are idempotent and the input
 * goes last, so a retry after a crash anywhere recomputes at most one chunk,
 * never double-counts, and still completes those steps (also when the crashed
 * chunk was the run's last: the commit then answers 'succeeded').
 */
export function createChunkProcessor(deps: ChunkProcessorDeps) {
  const now = deps.now ?? (() => new Date())
  return async (job: Job): Promise<ChunkOutcome> => {
    const parsed = ChunkJob.safeParse(job.data)
    if (!parsed.success) throw new UnrecoverableError(`invalid chunk job data: ${parsed.error.issues[0]?.message}`)
    const { tenant, runId, chunkIndex } = parsed.data
    const log = deps.logger.child({ queue: CHUNK_QUEUE, jobId: job.id, runId, tenant, chunkIndex })
    const { store } = deps

    const jobStarted = performance.now()
    const run = await store.startChunk(tenant, runId, now())
    if (run === null || (run.status !== 'running' && run.status !== 'succeeded')) {
      await store.deleteChunkInputs(tenant, runId, [chunkIndex])
      log.info({ status: run?.status ?? 'missing' }, 'run not active: chunk skipped')
      return { outcome: 'skipped', series: 0, failed: 0 }
    }
    const series = await store.readChunkInput(tenant, runId, chunkIndex)
    if (series === null) {
      if (await store.isChunkCommitted(tenant, runId, chunkIndex)) return { outcome: 'already-done', series: 0, failed: 0 }
      const current = await store.getRun(tenant, runId)
      if (current !== null && current.status !== 'running' && current.status !== 'succeeded') {
        return { outcome: 'skipped', series: 0, failed: 0 }
      }
      throw new UnrecoverableError(`input of chunk ${chunkIndex} is missing (expired?)`)
    }

    const started = performance.now()
    const fitSeconds: number[] = []
    const tallier = new ChunkTallier(run.settings.rankBy)
    // Each item is tallied and encoded as soon as it is fitted: only its bytes wait for the commit (prepared-item.ts).
    const items: PreparedItem[] = []
    const signals: WorklistSignals[] = []
    for (const s of series) {
      const t0 = performance.now()
      const item = withOpenPeriodsWarning(forecastItem(deps.forecast, run.settings, s), s.openPeriods)
      fitSeconds.push((performance.now() - t0) / 1000)
      tallier.add(item)
      items.push(prepareItem(item))
      signals.push(itemSignals(item, s.demand.length))
    }
    const computeMs = Math.round(performance.now() - started)
    const tally = tallier.tally()
    // The planners' worklist follows each published chunk (runs/worklist-service.ts); idempotent like the commit.
    const afterPublish = async (createdAtMs: number) => {
      await recordWorklist({ runs: store, worklist: store.worklist }, tenant, runId, createdAtMs, signals, store.worklistChangePercent)
    }
    const outcome = await store.commitChunk(tenant, runId, chunkIndex, items, tally, now(), run.settings.publish === true, afterPublish)
    // Counted once per chunk: only the call whose commit took the items (a retried chunk is not counted twice).
    if (outcome === 'committed' || outcome === 'finished') await store.stats.recordFits(fitSeconds, tally.failed)
    // Before the input is deleted, so a failed emit retries the chunk (the commit is then a no-op).
    if (outcome === 'finished' || outcome === 'succeeded') await deps.onRunEnded?.(tenant, runId)
    await store.deleteChunkInputs(tenant, runId, [chunkIndex])
    const totalMs = Math.round(performance.now() - jobStarted)
    log.info({ outcome, series: items.length, failed: tally.failed, computeMs, totalMs }, 'chunk processed')
    return { outcome, series: items.length, failed: tally.failed }
  }
}
