import type { AccuracyStore } from '../storage/erp/accuracy-store.js'
import type { Review, ReviewState } from './review.js'
import type { RunStore } from '../storage/runs/run-store.js'
import type { StoredWorklistEntry, WorklistStore } from '../storage/worklist/worklist-store.js'
import { decodeCursor, encodeCursor } from '../storage/paging.js'
import { decideWorklist, pickComparison, type WorklistEntry, type WorklistKind, type WorklistSignals } from './worklist.js'

/** One SKU on the worklist, with what each of its kinds found. */
export interface WorklistItem {
  readonly sku: string
  readonly kinds: WorklistKind[]
  readonly trackingSignal: {
    readonly trackingSignal: number | null
    readonly smoothedTrackingSignal: number | null
    readonly scoredPeriods: number
    readonly flaggedBy: string[]
  } | null
  /** `percent`: the change in percent, like WORKLIST_CHANGE_PERCENT (the stored entry keeps the ratio). */
  readonly change: { readonly percent: number | null; readonly previousRunId: string | null; readonly commonPeriods: number } | null
  readonly failure: { readonly code: string; readonly message: string } | null
  readonly historyLength: number | null
  /** The publishing run that decided the SKU's run kinds; null for a SKU only biased. */
  readonly runId: string | null
  readonly review: Review | null
}

export interface WorklistQuery {
  readonly kind?: WorklistKind
  readonly limit: number
  readonly cursor?: string
  readonly includeSnoozed: boolean
}

export interface WorklistDeps {
  readonly worklist: Pick<WorklistStore, 'skusAfter' | 'entries' | 'reviews' | 'setReview' | 'counts'>
  readonly accuracy: Pick<AccuracyStore, 'flaggedAfter' | 'flaggedCount' | 'getMany' | 'review'>
  readonly runs: Pick<RunStore, 'publishedPoints'>
  readonly now?: () => Date
}

const compareBytes = (a: string, b: string) => Buffer.compare(Buffer.from(a, 'utf8'), Buffer.from(b, 'utf8'))

/** Sorted lists merged into one, in byte order (as Redis orders members by lex), without repeats. */
export function mergeSkus(lists: readonly (readonly string[])[]): string[] {
  return [...new Set(lists.flat())].sort(compareBytes)
}

/**
 * The worklist: the accuracy store's biased SKUs and the run-decided kinds
 * (storage/worklist), paged together by SKU, with one review per SKU that
 * lasts until a newer run publishes (or fails) the SKU.
 */
export class WorklistService {
  constructor(private readonly deps: WorklistDeps) {}

  /**
   * One page by SKU (byte order). Snoozed SKUs are left out unless
   * includeSnoozed, so a page may hold fewer than `limit` items.
   * @throws CursorError on a cursor this service did not issue.
   */
  async list(tenant: string, q: WorklistQuery): Promise<{ items: WorklistItem[]; nextCursor: string | null }> {
    const after = q.cursor === undefined ? null : decodeCursor(q.cursor)
    const n = Math.max(1, Math.floor(q.limit))
    const { worklist, accuracy } = this.deps
    let skus: string[]
    if (q.kind === 'biased') skus = await accuracy.flaggedAfter(tenant, after, n + 1)
    else if (q.kind !== undefined) skus = await worklist.skusAfter(tenant, q.kind, after, n + 1)
    else skus = mergeSkus(await Promise.all([accuracy.flaggedAfter(tenant, after, n + 1), worklist.skusAfter(tenant, 'any', after, n + 1)])).slice(0, n + 1)
    const page = skus.slice(0, n)
    const last = page[page.length - 1]
    const nextCursor = skus.length > n && last !== undefined ? encodeCursor(last) : null
    const items = (await this.items(tenant, page)).filter((item) => item !== null && (q.includeSnoozed || item.review?.state !== 'snoozed'))
    return { items: items as WorklistItem[], nextCursor }
  }

  /** SKUs on the list per kind (snoozed ones included). */
  async counts(tenant: string): Promise<Record<WorklistKind, number>> {
    const [biased, rest] = await Promise.all([this.deps.accuracy.flaggedCount(tenant), this.deps.worklist.counts(tenant)])
    return { biased, ...rest }
  }

  /**
   * Acknowledges or snoozes a SKU on the worklist, whatever its kinds; a biased
   * SKU's accuracy exception gets the same review. Null when the SKU is not on the list.
   */
  async review(tenant: string, sku: string, state: ReviewState, note: string): Promise<WorklistItem | null> {
    const [item] = await this.items(tenant, [sku])
    if (item === null || item === undefined) return null
    const review: Review = { state, note, at: (this.deps.now?.() ?? new Date()).toISOString(), runId: item.runId ?? (await this.newestPublished(tenant, sku)) }
    await this.deps.worklist.setReview(tenant, sku, review)
    if (item.kinds.includes('biased')) await this.deps.accuracy.review(tenant, sku, state, note)
    return { ...item, review }
  }

  private async newestPublished(tenant: string, sku: string): Promise<string | null> {
    const [published] = await this.deps.runs.publishedPoints(tenant, [sku])
    return published?.[0]?.runId ?? null
  }

  /** The items of the SKUs in the order asked; null for a SKU on no list. */
  private async items(tenant: string, skus: readonly string[]): Promise<(WorklistItem | null)[]> {
    if (skus.length === 0) return []
    const [entries, reviews, summaries] = await Promise.all([
      this.deps.worklist.entries(tenant, skus),
      this.deps.worklist.reviews(tenant, skus),
      this.deps.accuracy.getMany(tenant, skus),
    ])
    // A review is measured against the run that decided the entry, or for a SKU only biased its newest published run.
    const unrecorded = skus.filter((_, i) => entries[i] === null)
    const published = await this.deps.runs.publishedPoints(tenant, unrecorded)
    const newest = new Map(unrecorded.map((sku, i) => [sku, published[i]?.[0]?.runId ?? null]))
    return skus.map((sku, i) => {
      const entry = entries[i] ?? null
      const summary = summaries[i] ?? null
      const kinds: WorklistKind[] = [...(summary?.flagged ? (['biased'] as const) : []), ...(entry?.kinds ?? [])]
      if (kinds.length === 0) return null
      const runId = entry?.runId ?? null
      const reference = entry === null ? (newest.get(sku) ?? null) : runId
      const review = reviews[i] ?? null
      return {
        sku,
        kinds,
        trackingSignal: summary?.flagged
          ? {
              trackingSignal: summary.trackingSignal,
              smoothedTrackingSignal: summary.smoothedTrackingSignal,
              scoredPeriods: summary.scoredPeriods,
              flaggedBy: [...summary.flaggedBy],
            }
          : null,
        change: changeOf(entry),
        failure: entry?.failure ?? null,
        historyLength: entry?.kinds.includes('short-history') ? entry.historyLength : null,
        runId,
        review: review !== null && review.runId === reference ? review : null,
      }
    })
  }
}

function changeOf(entry: StoredWorklistEntry | null): WorklistItem['change'] {
  if (entry === null || !entry.kinds.includes('large-change')) return null
  // toPrecision(12): 0.6 * 100 is 60.00000000000001 in binary floating point; twelve digits are far more than a sum carries.
  const percent = entry.changeRatio === null ? null : Number((entry.changeRatio * 100).toPrecision(12))
  return { percent, previousRunId: entry.previousRunId, commonPeriods: entry.commonPeriods }
}

/**
 * Records a publishing run's worklist decisions for the SKUs of one chunk:
 * compares each published forecast with the SKU's previous published one (the
 * kept list, already holding this run's) and stores the outcome. Idempotent:
 * a retried chunk reads the same lists and records the same entries.
 */
export async function recordWorklist(
  deps: { readonly runs: Pick<RunStore, 'publishedPoints'>; readonly worklist: Pick<WorklistStore, 'record'> },
  tenant: string,
  runId: string,
  createdAtMs: number,
  signals: readonly WorklistSignals[],
  thresholdPercent: number,
): Promise<number> {
  if (signals.length === 0) return 0
  const published = await deps.runs.publishedPoints(
    tenant,
    signals.map((s) => s.sku),
  )
  const entries: WorklistEntry[] = []
  signals.forEach((s, i) => {
    if (s.failure !== null) {
      entries.push(decideWorklist(s, null, null, thresholdPercent))
      return
    }
    const { current, previous } = pickComparison(published[i] ?? [], runId)
    // Not in the kept list: a newer run's forecast pushed this one out, and that run decides the SKU.
    if (current !== null) entries.push(decideWorklist(s, current, previous, thresholdPercent))
  })
  return deps.worklist.record(tenant, runId, createdAtMs, entries)
}
