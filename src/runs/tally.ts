import { MODEL_NAMES, type MetricName, type ModelName } from '../engine/index.js'
import type { ResultItem } from './contract.js'

const isModel = (s: string): s is ModelName => (MODEL_NAMES as readonly string[]).includes(s)

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

  constructor(private readonly metric: MetricName) {}

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
export function tallyItems(items: readonly ResultItem[], metric: MetricName): ChunkTally {
  const tallier = new ChunkTallier(metric)
  for (const item of items) tallier.add(item)
  return tallier.tally()
}
