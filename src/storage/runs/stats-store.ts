import type { RedisClient } from '../redis.js'
import { statsKeys } from '../keys.js'
import { RUN_STATUSES, type FitStats, type RunStatus } from '../../runs/contract.js'

/**
 * Upper bounds (seconds) of the fit duration histogram kept in Redis; the same
 * buckets as the in-process almanac_fit_duration_seconds (http/metrics.ts).
 */
export const FIT_BUCKETS_SECONDS = [0.001, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5] as const

/**
 * Service-wide counters for /metrics, written by the API (run created) and the
 * workers (status changes, fits), read by any API process at scrape time.
 *
 * Redis Cluster: these keys lie outside the run's hash tag, so they are updated
 * by a single-key call right after the run's own script (never inside it). The
 * counters are therefore eventually consistent with the run records: a process
 * dying between the two calls, or a Redis error on the second, loses one update
 * (the run itself is unaffected; updates are best effort and never throw).
 * `queued` and `running` count runs in that status now; `succeeded`, `failed`
 * and `cancelled` count runs that ever reached it (run records expire, counters
 * do not).
 */
export class RunStats {
  private readonly keys: ReturnType<typeof statsKeys>

  constructor(
    private readonly redis: RedisClient,
    prefix: string,
  ) {
    this.keys = statsKeys(prefix)
  }

  /** A run was created (status queued). */
  async created(): Promise<void> {
    await this.redis.hincrby(this.keys.runs, 'queued', 1).catch(() => undefined)
  }

  /** A run moved from one status to another (no-op when they are equal). */
  async moved(from: RunStatus, to: RunStatus): Promise<void> {
    if (from === to) return
    const tx = this.redis.multi().hincrby(this.keys.runs, from, -1).hincrby(this.keys.runs, to, 1)
    await tx.exec().catch(() => undefined)
  }

  /** One chunk's fits: each series' duration in seconds (ok and error alike) and how many were errors. */
  async recordFits(durationsSeconds: readonly number[], errors: number): Promise<void> {
    if (durationsSeconds.length === 0) return
    const perBucket = new Array<number>(FIT_BUCKETS_SECONDS.length + 1).fill(0)
    let sum = 0
    for (const d of durationsSeconds) {
      const s = Number.isFinite(d) && d > 0 ? d : 0
      sum += s
      const i = FIT_BUCKETS_SECONDS.findIndex((bound) => s <= bound)
      perBucket[i === -1 ? FIT_BUCKETS_SECONDS.length : i]!++
    }
    const p = this.redis.pipeline()
    p.hincrby(this.keys.fits, 'ok', durationsSeconds.length - errors)
    p.hincrby(this.keys.fits, 'error', errors)
    p.hincrby(this.keys.fits, 'count', durationsSeconds.length)
    p.hincrbyfloat(this.keys.fits, 'sum', sum)
    perBucket.forEach((n, i) => {
      if (n > 0) p.hincrby(this.keys.fits, `le:${bucketLabel(i)}`, n)
    })
    await p.exec().catch(() => undefined)
  }

  /** Runs by status; negative drift (counters started while runs were in flight) reads as 0. */
  async runs(): Promise<Record<RunStatus, number>> {
    const h = await this.redis.hgetall(this.keys.runs)
    return Object.fromEntries(RUN_STATUSES.map((s) => [s, Math.max(0, toCount(h[s]))])) as Record<RunStatus, number>
  }

  async fits(): Promise<FitStats> {
    const h = await this.redis.hgetall(this.keys.fits)
    let running = 0
    const buckets = [...FIT_BUCKETS_SECONDS.map((_, i) => i), FIT_BUCKETS_SECONDS.length].map((i) => (running += toCount(h[`le:${bucketLabel(i)}`])))
    const sum = Number(h.sum ?? 0)
    return { ok: toCount(h.ok), error: toCount(h.error), buckets, sum: Number.isFinite(sum) ? sum : 0, count: toCount(h.count) }
  }
}

function bucketLabel(i: number): string {
  return i < FIT_BUCKETS_SECONDS.length ? String(FIT_BUCKETS_SECONDS[i]) : '+Inf'
}

function toCount(v: string | undefined): number {
  const n = Number(v ?? 0)
  return Number.isFinite(n) ? n : 0
}
