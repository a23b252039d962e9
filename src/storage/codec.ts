import { METRIC_NAMES, MODEL_NAMES, type ForecastResult, type Frequency, type ModelName } from '../engine/index.js'
import { RunSettings } from '../schemas/run.js'
import { RUN_STATUSES, type ForecastItem, type RunRecord, type RunStatus, type ResultItem, type RunSummary } from './types.js'

/** Conversions between stored strings and the contract types. */

/** Fields of the run hash written at submit time. */
export function newRunFields(run: {
  id: string
  tenant: string
  createdAt: string
  total: number
  chunks: number
  settings: RunSettings
}): Record<string, string> {
  return {
    id: run.id,
    tenant: run.tenant,
    status: 'queued',
    total: String(run.total),
    done: '0',
    failed: '0',
    chunks: String(run.chunks),
    chunksRemaining: String(run.chunks),
    createdAt: run.createdAt,
    settings: JSON.stringify(run.settings),
    errSum: '0',
    errCount: '0',
  }
}

const isStatus = (s: string | undefined): s is RunStatus => RUN_STATUSES.includes(s as RunStatus)
const isModel = (s: string): s is ModelName => (MODEL_NAMES as readonly string[]).includes(s)

/** Run hash (HGETALL) to RunRecord; null for an empty hash (no such run). */
export function decodeRunRecord(hash: Record<string, string>): RunRecord | null {
  if (!hash.id || !isStatus(hash.status)) return null
  const settings = RunSettings.parse(JSON.parse(hash.settings ?? '{}'))
  return {
    id: hash.id,
    tenant: hash.tenant ?? '',
    status: hash.status,
    progress: { total: Number(hash.total ?? 0), done: Number(hash.done ?? 0), failed: Number(hash.failed ?? 0) },
    createdAt: hash.createdAt ?? '',
    startedAt: hash.startedAt ?? null,
    finishedAt: hash.finishedAt ?? null,
    settings,
    summary: hash.status === 'succeeded' ? decodeSummary(hash, settings) : null,
    error: hash.error ?? null,
  }
}

function decodeSummary(hash: Record<string, string>, settings: RunSettings): RunSummary {
  const modelWins: Partial<Record<ModelName, number>> = {}
  for (const [field, value] of Object.entries(hash)) {
    const model = field.startsWith('win:') ? field.slice(4) : ''
    if (isModel(model)) modelWins[model] = Number(value)
  }
  const errCount = Number(hash.errCount ?? 0)
  const errSum = Number(hash.errSum ?? 0)
  return {
    rankBy: settings.rankBy,
    modelCounts: modelWins,
    meanHoldoutError: errCount > 0 && Number.isFinite(errSum) ? errSum / errCount : null,
  }
}

/** Summary contributions of one chunk. */
export interface ChunkTally {
  readonly done: number
  readonly failed: number
  readonly wins: ReadonlyMap<ModelName, number>
  /** Sum and count of the winners' holdout errors on the run's metric, where defined. */
  readonly errSum: number
  readonly errCount: number
}

/**
 * Tally of a chunk's items, added one at a time (so the items need not be kept):
 * every item is done, error items are also failed. Holdout error counts only
 * where selection used a holdout and the value is finite.
 */
export class ChunkTallier {
  private readonly wins = new Map<ModelName, number>()
  private done = 0
  private failed = 0
  private errSum = 0
  private errCount = 0

  constructor(private readonly metric: (typeof METRIC_NAMES)[number]) {}

  add(item: ResultItem): void {
    this.done++
    if ('failure' in item) {
      this.failed++
      return
    }
    // Items are tallied by the process that fitted them, so the model is always known here.
    if (isModel(item.model)) this.wins.set(item.model, (this.wins.get(item.model) ?? 0) + 1)
    const value = item.modelChoice.method === 'holdout' ? item.holdoutErrors?.[this.metric] : null
    if (typeof value === 'number' && Number.isFinite(value)) {
      this.errSum += value
      this.errCount++
    }
  }

  tally(): ChunkTally {
    return { done: this.done, failed: this.failed, wins: new Map(this.wins), errSum: this.errSum, errCount: this.errCount }
  }
}

/** Tally of a chunk's items (ChunkTallier over all of them). */
export function tallyItems(items: readonly ResultItem[], metric: (typeof METRIC_NAMES)[number]): ChunkTally {
  const tallier = new ChunkTallier(metric)
  for (const item of items) tallier.add(item)
  return tallier.tally()
}

/** The stored part of a successful engine result (no fitted values, no history). */
export function toResultItem(sku: string, frequency: Frequency, r: ForecastResult): ForecastItem {
  return {
    sku,
    frequency,
    model: r.model,
    family: r.family,
    params: r.params,
    modelChoice: r.modelChoice,
    holdoutErrors: r.holdoutErrors,
    candidates: r.candidates,
    forecast: r.forecast,
    intervalMethod: r.intervalMethod,
    warnings: r.warnings,
  }
}

/** Opaque page cursor: the last SKU of the previous page, base64url. */
export function encodeCursor(sku: string): string {
  return Buffer.from(sku, 'utf8').toString('base64url')
}

/** @returns the SKU, or null when the cursor is malformed. */
export function decodeCursor(cursor: string): string | null {
  if (!/^[A-Za-z0-9_-]+$/.test(cursor)) return null
  const sku = Buffer.from(cursor, 'base64url').toString('utf8')
  return sku.length > 0 && encodeCursor(sku) === cursor ? sku : null
}
