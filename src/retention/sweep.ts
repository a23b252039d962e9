import { forgetSkuRecords, type SkuRecordStores } from '../history/sku-records.js'

/**
 * Idle-history retention (HISTORY_IDLE_DAYS): a SKU whose history nobody has
 * written for that many days is removed with everything kept for it, as
 * DELETE /v1/skus/{sku}/history removes it. The sweep works a bounded batch
 * per tenant per step and visits the tenants in turn, so a tenant with a
 * million idle SKUs delays the others by one batch at a time, not by its
 * whole backlog.
 *
 * Order per SKU: the history goes first, in one script that re-checks the
 * last-write time (a write since the sweep read it wins) and lists the SKU as
 * removed; its records go after, and the SKU leaves that list only then. A
 * sweep stopped in between finishes the records on its next step.
 */

export const MS_PER_DAY = 86_400_000

/** SKUs per tenant per step: one round trip of candidates, as uploads write 500 SKUs per round trip. */
export const RETENTION_BATCH = 500

/** SKUs deleted, and records forgotten, this many at once: each is a few small commands, so round trips dominate. */
const PARALLEL = 16

export interface RetentionDeps {
  readonly index: {
    backfill(tenant: string, nowMs: number, limit: number): Promise<boolean>
    idle(tenant: string, cutoffMs: number, limit: number): Promise<string[]>
    removed(tenant: string, limit: number): Promise<string[]>
    forgotten(tenant: string, skus: readonly string[]): Promise<void>
  }
  readonly histories: {
    deleteIfIdle(tenant: string, sku: string, cutoffMs: number): Promise<'deleted' | 'written' | 'gone'>
  }
  readonly records: SkuRecordStores
}

export interface RetentionOptions {
  /** Days without a write before a SKU is removed; must be at least 1 (0 means off and is never swept). */
  readonly idleDays: number
  /** The sweep's clock, read once per sweep. */
  readonly nowMs: number
  readonly batchSize?: number
}

export interface TenantStep {
  /** SKUs whose history this step deleted. */
  readonly removed: number
  /** Idle SKUs found that were written meanwhile and kept. */
  readonly kept: number
  /** True when the tenant may have more to do (a full batch somewhere, or the backfill not finished). */
  readonly more: boolean
}

/** The instant at or before which a last write makes a SKU idle. */
export function idleCutoffMs(nowMs: number, idleDays: number): number {
  return nowMs - idleDays * MS_PER_DAY
}

/** One bounded step for one tenant: finish stopped removals, backfill a page, remove a batch of idle SKUs. */
export async function sweepTenantStep(deps: RetentionDeps, tenant: string, opts: RetentionOptions): Promise<TenantStep> {
  if (!(opts.idleDays >= 1)) throw new Error(`idle-history retention needs at least 1 day, got ${opts.idleDays}`)
  const size = Math.max(1, Math.floor(opts.batchSize ?? RETENTION_BATCH))
  const left = await deps.index.removed(tenant, size)
  await forgetAll(deps, tenant, left)
  const backfilling = await deps.index.backfill(tenant, opts.nowMs, size)
  const cutoff = idleCutoffMs(opts.nowMs, opts.idleDays)
  const idle = await deps.index.idle(tenant, cutoff, size)
  const gone: string[] = []
  let removed = 0
  let kept = 0
  for (let i = 0; i < idle.length; i += PARALLEL) {
    const part = idle.slice(i, i + PARALLEL)
    const outcomes = await Promise.all(part.map((sku) => deps.histories.deleteIfIdle(tenant, sku, cutoff)))
    outcomes.forEach((outcome, j) => {
      if (outcome === 'written') kept++
      else gone.push(part[j]!)
      if (outcome === 'deleted') removed++
    })
  }
  await forgetAll(deps, tenant, gone)
  return { removed, kept, more: left.length >= size || backfilling || idle.length >= size }
}

async function forgetAll(deps: RetentionDeps, tenant: string, skus: readonly string[]): Promise<void> {
  for (let i = 0; i < skus.length; i += PARALLEL) {
    const part = skus.slice(i, i + PARALLEL)
    await Promise.all(part.map((sku) => forgetSkuRecords(deps.records, tenant, sku)))
    await deps.index.forgotten(tenant, part)
  }
}

export interface SweepOutcome {
  /** SKUs removed per tenant (tenants with none are left out). */
  readonly removed: ReadonlyMap<string, number>
  /** Rounds over the tenants. */
  readonly rounds: number
  /** True when the sweep stopped (shouldStop) before every tenant was done. */
  readonly stopped: boolean
}

/**
 * Sweeps the tenants in rounds, one step each per round, until none has more
 * to do or `shouldStop` says so (the next sweep carries on). A tenant whose
 * step fails is reported to `onError` and left out of the rest of this sweep.
 */
export async function sweepIdleHistories(
  deps: RetentionDeps,
  tenants: readonly string[],
  opts: RetentionOptions & {
    readonly shouldStop?: () => boolean
    readonly onError?: (tenant: string, err: unknown) => void
  },
): Promise<SweepOutcome> {
  const removed = new Map<string, number>()
  let active = [...new Set(tenants)]
  let rounds = 0
  while (active.length > 0) {
    if (opts.shouldStop?.()) return { removed, rounds, stopped: true }
    rounds++
    const next: string[] = []
    for (const tenant of active) {
      try {
        const step = await sweepTenantStep(deps, tenant, opts)
        if (step.removed > 0) removed.set(tenant, (removed.get(tenant) ?? 0) + step.removed)
        if (step.more) next.push(tenant)
      } catch (err) {
        opts.onError?.(tenant, err)
      }
    }
    active = next
  }
  return { removed, rounds, stopped: false }
}
