import type { Config } from '../../config.js'
import type { RedisClient } from '../redis.js'
import { countOf, decodeJson, oneOf } from '../decode.js'
import { ChunkSeriesItem, RunSettings, type RunRequest } from '../../schemas/run.js'
import { isSeriesItem } from '../../schemas/series-check.js'
import { z } from 'zod'
import { decodeRunRecord, encodeFailure, newRunFields } from './run-hash.js'
import { loadItem } from '../items/item-codec.js'
import type { PreparedItem } from '../items/prepared-item.js'
import { readStoredPage } from './result-pages.js'
import { latestKey, publishedKey, runKeys, isValidRunId, isValidTenant } from '../keys.js'
import {
  decodeLatest,
  decodePoints,
  decodePublished,
  recordTail,
  type ForecastPoints,
  type LatestRecord,
  type PublishedPoints,
} from '../items/latest-record.js'
import { defineRunScripts, type RunScripts } from './scripts.js'
import { RunStats } from './stats-store.js'
import { SkuSummaryStore } from '../skus/sku-summary-store.js'
import { RunIndex } from './run-index.js'
import {
  RUN_STATUSES,
  type Failure,
  type LatestForecast,
  type ResultPage,
  type RunListFilter,
  type RunOrigin,
  type RunPage,
  type RunRecord,
  type RunStatus,
} from '../../runs/contract.js'
import type { ChunkTally } from '../../runs/tally.js'
import { WorklistStore } from '../worklist/worklist-store.js'
import { DEFAULT_CHANGE_PERCENT } from '../../runs/worklist.js'

/** Run record TTL relative to result retention: summaries outlive results. */
export const RECORD_TTL_FACTOR = 2

/** Retention settings of the run store, from config (RESULT_RETENTION_SECONDS). */
export function runStoreOptions(
  config: Pick<Config, 'redisPrefix' | 'resultRetentionSeconds' | 'publishedForecastsKept' | 'worklistChangePercent'>,
): RunStoreOptions {
  return {
    prefix: config.redisPrefix,
    resultTtlSeconds: config.resultRetentionSeconds,
    recordTtlSeconds: config.resultRetentionSeconds * RECORD_TTL_FACTOR,
    publishedKept: config.publishedForecastsKept ?? DEFAULT_PUBLISHED_KEPT,
    worklistChangePercent: config.worklistChangePercent ?? DEFAULT_CHANGE_PERCENT,
  }
}

/** Published forecasts kept per SKU when the config does not say (PUBLISHED_FORECASTS_KEPT). */
export const DEFAULT_PUBLISHED_KEPT = 12

export interface RunStoreOptions {
  readonly prefix: string
  /** TTL of results and chunk inputs (the latest-forecast index does not expire). */
  readonly resultTtlSeconds: number
  /** TTL of the run record (status, progress, summary); at least resultTtlSeconds. */
  readonly recordTtlSeconds: number
  /** Published forecasts kept per SKU (accuracy at a fixed lag); default DEFAULT_PUBLISHED_KEPT. */
  readonly publishedKept?: number
  /** Large-change threshold of the worklist in percent (WORKLIST_CHANGE_PERCENT); default DEFAULT_CHANGE_PERCENT. */
  readonly worklistChangePercent?: number
}

export const COMMIT_OUTCOMES = ['committed', 'finished', 'duplicate', 'missing', 'cancelled', 'failed', 'succeeded'] as const
export type CommitOutcome = (typeof COMMIT_OUTCOMES)[number]

export interface ChunkStart {
  readonly status: string
  readonly settings: RunSettings
  readonly createdAtMs: number
}

const ChunkInput = z.array(ChunkSeriesItem)

/** Bytes of chunk inputs written per round trip by createRunFromInputs (a few milliseconds of socket writes each). */
const INPUT_WRITE_BYTES = 2 * 1024 * 1024

/** Run records, chunk inputs and results in Redis (layout in keys.ts, scripts in scripts.ts). */
export class RunStore {
  private readonly scripts: RunScripts
  /** Service-wide counters for /metrics, updated after each status change (stats-store.ts). */
  readonly stats: RunStats
  /** The tenant's runs by creation time (GET /v1/runs). */
  readonly index: RunIndex
  /** The run-decided part of the planners' worklist, written after a publishing chunk (runs/worklist-service.ts). */
  readonly worklist: WorklistStore
  /** Each SKU's summary of its newest published outcome, for the SKU list's filters. */
  readonly summaries: SkuSummaryStore

  constructor(
    private readonly redis: RedisClient,
    private readonly opts: RunStoreOptions,
  ) {
    this.scripts = defineRunScripts(redis)
    this.stats = new RunStats(redis, opts.prefix)
    this.index = new RunIndex(redis, opts)
    this.worklist = new WorklistStore(redis, { prefix: opts.prefix })
    this.summaries = new SkuSummaryStore(redis, { prefix: opts.prefix })
  }

  /** The worklist's large-change threshold in percent (runs/worklist.ts). */
  get worklistChangePercent(): number {
    return this.opts.worklistChangePercent ?? DEFAULT_CHANGE_PERCENT
  }

  private keys(tenant: string, runId: string) {
    return runKeys(this.opts.prefix, tenant, runId)
  }

  /**
   * Indexes the run (run-index.ts), then writes the run record and one input
   * key per chunk in one transaction. The caller has checked the request
   * (runs/input.ts: one series per SKU).
   */
  async createRun(
    tenant: string,
    runId: string,
    request: RunRequest,
    chunkSize: number,
    now: Date,
    origin: RunOrigin = { kind: 'inline' },
  ): Promise<{ record: RunRecord; chunks: number }> {
    const { series, ...settings } = request
    const inputs: string[] = []
    for (let c = 0; c * chunkSize < series.length; c++) inputs.push(JSON.stringify(series.slice(c * chunkSize, (c + 1) * chunkSize)))
    return this.createRunFromInputs(tenant, runId, settings, series.length, inputs, now, origin)
  }

  /**
   * createRun with the chunk inputs already made (JSON arrays of at most chunkSize
   * series each, as createRun writes them): a large body is cut on a thread
   * (http/body-threads), so the API never holds its series as objects.
   */
  async createRunFromInputs(
    tenant: string,
    runId: string,
    settings: RunSettings,
    total: number,
    inputs: readonly (string | Uint8Array)[],
    now: Date,
    origin: RunOrigin = { kind: 'inline' },
  ): Promise<{ record: RunRecord; chunks: number }> {
    const chunks = inputs.length
    const k = this.keys(tenant, runId)
    await this.index.add(tenant, runId, now.getTime())
    // The inputs first, a few MiB per round trip: one pipeline of a large run's tens of MiB
    // held the event loop while it was written to the socket (bench:abuse, profiled). Nothing
    // reads an input before its run record exists and its chunk jobs are queued; inputs of a
    // run whose record was never written expire with their TTL.
    let batch = this.redis.pipeline()
    let batchBytes = 0
    for (let c = 0; c < chunks; c++) {
      const input = inputs[c]!
      batch.set(k.input(c), typeof input === 'string' ? input : Buffer.from(input.buffer, input.byteOffset, input.byteLength), 'EX', this.opts.resultTtlSeconds)
      batchBytes += input.length
      if (batchBytes >= INPUT_WRITE_BYTES) {
        await execOrThrow(batch)
        batch = this.redis.pipeline()
        batchBytes = 0
      }
    }
    if (batchBytes > 0) await execOrThrow(batch)
    const tx = this.redis.multi()
    const fields = newRunFields({ id: runId, tenant, createdAt: now.toISOString(), total, chunks, settings, scope: null, origin })
    tx.hset(k.run, fields)
    tx.expire(k.run, this.opts.recordTtlSeconds)
    await execOrThrow(tx)
    await this.stats.created()
    return { record: decodeRunRecord(fields)!, chunks }
  }

  async getRun(tenant: string, runId: string): Promise<RunRecord | null> {
    if (!isValidTenant(tenant) || !isValidRunId(runId)) return null
    return decodeRunRecord(await this.redis.hgetall(this.keys(tenant, runId).run))
  }

  /**
   * The tenant's runs, newest first, filtered (run-index.ts).
   * @throws CursorError on a cursor this service did not issue.
   */
  listRuns(tenant: string, filter: RunListFilter, page: { readonly limit: number; readonly cursor?: string }): Promise<RunPage> {
    return this.index.page(tenant, filter, page.limit, page.cursor)
  }

  /** How many chunks the run was split into (0 when the run is unknown). */
  async chunkCount(tenant: string, runId: string): Promise<number> {
    return countOf((await this.redis.hget(this.keys(tenant, runId).run, 'chunks')) ?? 0, `chunks of run ${runId}`)
  }

  /** Marks the run running if it was queued; null when the run is gone. */
  async startChunk(tenant: string, runId: string, now: Date): Promise<ChunkStart | null> {
    const r = await this.scripts.startChunk(this.keys(tenant, runId).run, now.toISOString())
    if (r === null) return null
    const [status, settings, createdAt, moved] = r
    if (moved === '1') await this.stats.moved('queued', 'running')
    return { status, settings: decodeJson(RunSettings, settings, `settings of run ${runId}`), createdAtMs: Date.parse(createdAt) }
  }

  /** The chunk's series, or null when the key is gone (chunk done, run cancelled, or expired). */
  async readChunkInput(tenant: string, runId: string, chunkIndex: number): Promise<ChunkSeriesItem[] | null> {
    const json = await this.redis.get(this.keys(tenant, runId).input(chunkIndex))
    if (json === null) return null
    // Written from a validated request or stored histories: the schema runs only if the plain check finds anything off.
    const raw = decodeJson(z.unknown(), json, `input of chunk ${chunkIndex} of run ${runId}`)
    return Array.isArray(raw) && raw.every(isSeriesItem) ? raw : decodeJson(ChunkInput, json, `input of chunk ${chunkIndex} of run ${runId}`)
  }

  async isChunkCommitted(tenant: string, runId: string, chunkIndex: number): Promise<boolean> {
    return (await this.redis.sismember(this.keys(tenant, runId).chunks, String(chunkIndex))) === 1
  }

  async deleteChunkInputs(tenant: string, runId: string, chunkIndexes: readonly number[]): Promise<void> {
    const k = this.keys(tenant, runId)
    for (let i = 0; i < chunkIndexes.length; i += 1000) {
      await this.redis.unlink(...chunkIndexes.slice(i, i + 1000).map((c) => k.input(c)))
    }
  }

  /**
   * Commits a chunk in three idempotent steps: store its items (storeItems),
   * when the run publishes make them the latest forecast of their SKUs
   * (updateLatest; a what-if run leaves that alone), then count the
   * chunk and finish the run when it was the last (commitChunk script, guarded
   * per chunk index). A publishing run also writes each SKU's summary for the
   * SKU list (SkuSummaryStore.publish, failed items included) right after the
   * latest records. A run thus reads 'succeeded' only after every SKU's
   * result and latest record are written; a retry after a crash between the
   * steps rewrites the same items and records and counts the chunk once.
   * Outcomes: 'committed' or 'finished' when this call counted the chunk
   * (finished: it was the run's last), 'duplicate' when it was counted before,
   * 'succeeded' when the run had already finished (so this chunk was counted),
   * 'cancelled' | 'failed' | 'missing' when nothing was counted. When the run
   * ended between storing the items and counting them, a what-if run removes
   * those items again (dropUncounted), so it holds exactly the results it
   * counted; a publishing run keeps them, because in that short window the
   * SKUs' latest records may already point at them (they live outside the
   * run's hash slot, so the two cannot change in one step).
   */
  async commitChunk(
    tenant: string,
    runId: string,
    chunkIndex: number,
    items: readonly PreparedItem[],
    tally: ChunkTally,
    now: Date,
    /** The run's `publish` setting; a what-if run (false) writes no latest or published record. */
    publish = false,
    /**
     * Runs after a publishing chunk's forecasts are published, before the chunk is counted
     * (the worklist); given the run's createdAt. Must be idempotent: a retried chunk runs it again.
     */
    afterPublish?: (createdAtMs: number) => Promise<void>,
  ): Promise<CommitOutcome> {
    const k = this.keys(tenant, runId)
    const stored: (string | number | Buffer)[] = [this.opts.resultTtlSeconds]
    for (const item of items) stored.push(item.sku, item.stored)
    const [step, createdAt] = await this.scripts.storeItems([k.run, k.skus, k.items], stored)
    if (step !== 'stored' && step !== 'succeeded') return oneOf(COMMIT_OUTCOMES, step, 'storeItems outcome')
    if (publish) {
      await this.updateLatest(tenant, runId, Date.parse(createdAt), now, items)
      await this.summaries.publish(tenant, runId, Date.parse(createdAt), items)
      await afterPublish?.(Date.parse(createdAt))
    }
    if (step === 'succeeded') return 'succeeded'
    const args: (string | number)[] = [
      chunkIndex,
      now.toISOString(),
      this.opts.resultTtlSeconds,
      this.opts.recordTtlSeconds,
      tally.done,
      tally.failed,
      String(tally.errSum),
      tally.errCount,
      tally.wins.size,
    ]
    for (const [model, n] of tally.wins) args.push(model, n)
    const [outcome, before] = await this.scripts.commitChunk([k.run, k.chunks], args)
    if (!publish && (outcome === 'cancelled' || outcome === 'failed')) {
      // Ended between storeItems and the count: the chunk is not counted, so its items go too.
      // A publishing run keeps them: the SKUs' latest records may already point at them.
      await this.scripts.dropUncounted([k.chunks, k.skus, k.items], [chunkIndex, ...items.map((i) => i.sku)])
    }
    if (before === 'queued' && outcome === 'committed') await this.stats.moved('queued', 'running')
    if ((before === 'queued' || before === 'running') && outcome === 'finished') await this.stats.moved(before, 'succeeded')
    return oneOf(COMMIT_OUTCOMES, outcome, 'commitChunk outcome')
  }

  /** Ends a queued or running run; returns the record afterwards (null if unknown). */
  async endRun(tenant: string, runId: string, status: 'cancelled' | 'failed', failure: Failure | null, now: Date): Promise<RunRecord | null> {
    if (!isValidTenant(tenant) || !isValidRunId(runId)) return null
    const k = this.keys(tenant, runId)
    const r = await this.scripts.endRun(
      [k.run, k.chunks, k.skus, k.items],
      [status, now.toISOString(), failure === null ? '' : encodeFailure(failure), this.opts.resultTtlSeconds, this.opts.recordTtlSeconds],
    )
    if (r === null) return null
    const [after, before] = r
    if (isStatus(before) && isStatus(after)) await this.stats.moved(before, after)
    return this.getRun(tenant, runId)
  }

  /**
   * Publishes the items' forecasts (error items are skipped): adds them to each
   * SKU's kept published forecasts, then makes this run the latest forecast of
   * the SKUs unless a newer run already holds them; each record keeps the point
   * forecast for accuracy scoring. Both steps are idempotent (a retried chunk
   * changes nothing). Returns how many latest records changed.
   */
  async updateLatest(tenant: string, runId: string, createdAtMs: number, producedAt: Date, items: readonly PreparedItem[]): Promise<number> {
    const produced = producedAt.toISOString()
    const pairs: (string | number)[] = []
    for (const item of items) if (item.points !== null) pairs.push(item.sku, recordTail(produced, item.points))
    if (pairs.length === 0) return 0
    // The kept list first: a crash in between leaves latest one run behind, which the retry fixes.
    await this.scripts.pushPublished(publishedKey(this.opts.prefix, tenant), [this.opts.publishedKept ?? DEFAULT_PUBLISHED_KEPT, createdAtMs, runId, ...pairs])
    return this.scripts.updateLatest(latestKey(this.opts.prefix, tenant), [createdAtMs, runId, ...pairs])
  }

  /**
   * Each SKU's kept published forecasts, newest first ([] when it has none), in
   * the order asked; they outlive the runs' results. One HMGET.
   */
  async publishedPoints(tenant: string, skus: readonly string[]): Promise<PublishedPoints[][]> {
    if (skus.length === 0 || !isValidTenant(tenant)) return skus.map(() => [])
    const values = await this.redis.hmget(publishedKey(this.opts.prefix, tenant), ...skus)
    return values.map((v) => (v === null ? [] : decodePublished(v)))
  }

  /**
   * One page of a run's results ordered by SKU (byte order), or null when the run does not exist.
   * @throws RunInputError on a malformed cursor.
   */
  async resultsPage(
    tenant: string,
    runId: string,
    page: { readonly limit: number; readonly cursor?: string; readonly sku?: string },
  ): Promise<ResultPage | null> {
    const stored = await readStoredPage(this.redis, this.opts.prefix, tenant, runId, page)
    if (stored === null) return null
    return { items: stored.items.map(([sku, value]) => loadItem(sku, value)), nextCursor: stored.nextCursor }
  }

  /**
   * Forget a SKU's latest forecast, its kept published forecasts, its worklist entry and its
   * published summary with its place in the SKU list's index sets (its history was deleted),
   * so a SKU created again under the same code is never scored against or listed by them; the
   * run's own results stay until they expire.
   */
  async forgetLatest(tenant: string, sku: string): Promise<void> {
    if (!isValidTenant(tenant)) return
    await this.redis.multi().hdel(latestKey(this.opts.prefix, tenant), sku).hdel(publishedKey(this.opts.prefix, tenant), sku).exec()
    await this.worklist.forget(tenant, sku)
    await this.summaries.forget(tenant, sku)
  }

  /**
   * The newest successful forecast of a SKU, or null when there is none or the
   * results of the run that made it have expired (retention).
   */
  async latest(tenant: string, sku: string): Promise<LatestForecast | null> {
    if (!isValidTenant(tenant)) return null
    const value = await this.redis.hget(latestKey(this.opts.prefix, tenant), sku)
    const record = value === null ? null : decodeLatest(value)
    if (record === null) return null
    const stored = await this.redis.hgetBuffer(this.keys(tenant, record.runId).items, sku)
    return stored === null ? null : { runId: record.runId, producedAt: record.producedAt, item: loadItem(sku, stored) }
  }

  /**
   * What accuracy scoring compares actuals with, per SKU in the order given:
   * the run and point forecast of the SKU's latest record (null when it has
   * none), also after the run's results have expired. One HMGET.
   */
  async latestPoints(tenant: string, skus: readonly string[]): Promise<(ForecastPoints | null)[]> {
    if (skus.length === 0 || !isValidTenant(tenant)) return skus.map(() => null)
    const records = await this.redis.hmget(latestKey(this.opts.prefix, tenant), ...skus)
    return records.map((v) => {
      const record = v === null ? null : decodeLatest(v)
      return record === null ? null : pointsOf(record)
    })
  }
}

/** The record's points, or null when they cannot be read. */
function pointsOf(record: LatestRecord): ForecastPoints | null {
  try {
    return { runId: record.runId, points: decodePoints(record.points) }
  } catch {
    return null
  }
}

const isStatus = (s: string): s is RunStatus => (RUN_STATUSES as readonly string[]).includes(s)

async function execOrThrow(tx: ReturnType<RedisClient['multi']>): Promise<void> {
  const results = await tx.exec()
  if (results === null) throw new Error('Redis transaction was aborted')
  for (const [err] of results) if (err) throw err
}
