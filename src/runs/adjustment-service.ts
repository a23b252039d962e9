import { parsePeriod, type Frequency } from '../engine/index.js'
import { ProblemError, type FieldError } from '../errors.js'
import type { HistoryData } from '../history/types.js'
import type { AdjustmentStore, AdjustmentWrite, StoredAdjustment, TrailEntry } from '../storage/adjustments/adjustment-store.js'
import type { ValueAddedStore } from '../storage/adjustments/value-added-store.js'
import { adjustPoints, finalDemandOf, sameAdjustment, type Adjustment, type AdjustmentChange } from './adjustments.js'
import type { LatestForecast } from './contract.js'
import { summariseValueAdded, valueAddedByAuthor, type ValueAddedRecord } from './value-added.js'

/**
 * Adjustments of SKU forecasts: checks them against the SKU's current
 * forecast and history, keeps the audit trail, expires them when their
 * periods pass and records forecast value added as actuals arrive.
 *
 * Expiry rule: a period has passed once the SKU's stored history contains it
 * (its label lies between the history's first and last period, a missing
 * value included). A passed period cannot be adjusted; an adjustment in force
 * for it expires (an `expired` trail entry) when the history write that
 * brings it is stored, right after its value added is recorded.
 */
export interface AdjustmentDeps {
  readonly store: Pick<AdjustmentStore, 'inForce' | 'inForceMany' | 'apply' | 'trail' | 'forget'>
  readonly valueAdded: Pick<ValueAddedStore, 'record' | 'records' | 'forget'>
  /** The SKU's current forecast (the run gateway's). */
  latestForecast(tenant: string, sku: string): Promise<LatestForecast | null>
  /** Point forecasts per SKU, also after run results expired (the run store's). */
  latestPoints(tenant: string, skus: readonly string[]): Promise<({ readonly runId: string; readonly points: ReadonlyMap<string, number> } | null)[]>
  /** The SKU's stored history, null when it has none. */
  history(tenant: string, sku: string): Promise<Pick<HistoryData, 'frequency' | 'firstPeriod' | 'demand'> | null>
  readonly now?: () => Date
}

/** A history just written, as the history store hands it over. */
export interface StoredHistoryEntry extends Pick<HistoryData, 'frequency' | 'firstPeriod' | 'demand'> {
  readonly sku: string
}

export interface AdjustmentRequest {
  readonly periods: readonly string[]
  readonly change: AdjustmentChange
  readonly reason: string
  readonly author: string
}

/** An adjustment as listed: with the current forecast's statistical and final demand of its period. */
export type AdjustmentListed = Omit<Adjustment, 'change'> &
  AdjustmentChange & { readonly statisticalDemand: number | null; readonly finalDemand: number | null }

/** Rounds of read-check-write before a write is reported as contended. */
const MAX_ATTEMPTS = 5
/** SKUs scored at once after a history write. */
const PARALLEL = 16

function ordinalOr(label: string, frequency: Frequency): number | null {
  try {
    return parsePeriod(label, frequency)
  } catch {
    return null
  }
}

/** The ordinal of a history's last period, or null when its first period does not parse. */
function lastOrdinal(h: Pick<HistoryData, 'frequency' | 'firstPeriod' | 'demand'>): number | null {
  const first = ordinalOr(h.firstPeriod, h.frequency)
  return first === null ? null : first + h.demand.length - 1
}

export class AdjustmentService {
  constructor(private readonly deps: AdjustmentDeps) {}

  private now(): string {
    return (this.deps.now?.() ?? new Date()).toISOString()
  }

  /** The SKU's current forecast, or a 404 problem. */
  private async forecastOf(tenant: string, sku: string) {
    const latest = await this.deps.latestForecast(tenant, sku)
    if (!latest || 'failure' in latest.item) throw new ProblemError('not-found', `No forecast for SKU ${sku}`)
    return { runId: latest.runId, item: latest.item }
  }

  /**
   * Sets the same adjustment for several periods of the SKU's current forecast.
   * A period whose adjustment already says the same (change, reason, author) is
   * left alone: repeating a request changes nothing and adds no trail entry.
   * @returns the adjustments of the requested periods and whether each was new
   * @throws ProblemError not-found (no forecast), period-not-adjustable (naming each period)
   */
  async set(tenant: string, sku: string, req: AdjustmentRequest, field = (i: number) => `periods[${i}]`): Promise<{ items: AdjustmentListed[]; created: boolean }> {
    const { runId, item } = await this.forecastOf(tenant, sku)
    const statistical = new Map(item.forecast.map((p) => [p.period, p.demand]))
    const history = await this.deps.history(tenant, sku)
    const passedThrough = history && history.frequency === item.frequency ? lastOrdinal(history) : null
    const errors: FieldError[] = []
    req.periods.forEach((period, i) => {
      if (!statistical.has(period)) {
        const first = item.forecast[0]?.period
        const last = item.forecast[item.forecast.length - 1]?.period
        errors.push({ path: field(i), message: `is not a period of the SKU's current forecast (${first} to ${last})` })
        return
      }
      const ordinal = ordinalOr(period, item.frequency)
      if (passedThrough !== null && ordinal !== null && ordinal <= passedThrough) {
        errors.push({ path: field(i), message: "has passed: the SKU's history already contains it" })
      }
    })
    if (errors.length > 0) {
      throw new ProblemError('period-not-adjustable', `${errors.length} of the periods cannot be adjusted`, errors)
    }
    for (let attempt = 1; ; attempt++) {
      const current = await this.deps.store.inForce(tenant, sku)
      const at = this.now()
      let created = false
      const writes: AdjustmentWrite[] = []
      for (const period of req.periods) {
        const before = current.get(period) ?? null
        const next: Adjustment = { period, change: req.change, reason: req.reason, author: req.author, setAt: at, runId }
        if (before !== null && sameAdjustment(before.adjustment, next)) continue
        if (before === null) created = true
        const stat = statistical.get(period) ?? null
        writes.push({
          period,
          expected: before?.stored ?? null,
          next,
          entry: trailEntry('set', period, next, before, next.change, stat, runId, at),
        })
      }
      if (await this.deps.store.apply(tenant, sku, writes)) {
        const listed = await this.list(tenant, sku)
        const asked = new Set(req.periods)
        return { items: listed.items.filter((a) => asked.has(a.period)), created }
      }
      if (attempt >= MAX_ATTEMPTS) throw new ProblemError('adjustment-conflict', `The adjustments of SKU ${sku} kept changing; try again`)
    }
  }

  /**
   * Removes the adjustment of a period; removing one that is not there changes nothing.
   * @returns whether one was removed
   */
  async remove(tenant: string, sku: string, period: string, who: { readonly author: string; readonly reason?: string | undefined }): Promise<boolean> {
    for (let attempt = 1; ; attempt++) {
      const before = (await this.deps.store.inForce(tenant, sku)).get(period) ?? null
      if (before === null) return false
      const latest = await this.deps.latestForecast(tenant, sku)
      const item = latest && !('failure' in latest.item) ? latest.item : null
      const stat = item?.forecast.find((p) => p.period === period)?.demand ?? null
      const at = this.now()
      const entry = trailEntry('removed', period, { author: who.author, reason: who.reason ?? 'removed' }, before, null, stat, latest?.runId ?? null, at)
      if (await this.deps.store.apply(tenant, sku, [{ period, expected: before.stored, next: null, entry }])) return true
      if (attempt >= MAX_ATTEMPTS) throw new ProblemError('adjustment-conflict', `The adjustments of SKU ${sku} kept changing; try again`)
    }
  }

  /** The adjustments in force for a SKU, oldest period first, with the current forecast's values. */
  async list(tenant: string, sku: string): Promise<{ sku: string; runId: string | null; items: AdjustmentListed[] }> {
    const [latest, current] = await Promise.all([this.deps.latestForecast(tenant, sku), this.deps.store.inForce(tenant, sku)])
    const item = latest && !('failure' in latest.item) ? latest.item : null
    const statistical = new Map((item?.forecast ?? []).map((p) => [p.period, p.demand]))
    const items = [...current.values()]
      .map(({ adjustment: a }) => {
        const stat = statistical.get(a.period) ?? null
        const { change, ...rest } = a
        return { ...rest, ...change, statisticalDemand: stat, finalDemand: stat === null ? null : finalDemandOf(stat, change) }
      })
      .sort((x, y) => (x.period < y.period ? -1 : x.period > y.period ? 1 : 0))
    return { sku, runId: item === null ? null : (latest?.runId ?? null), items }
  }

  /** A forecast's points with `finalDemand` and `adjustment` (demand stays the statistical value). */
  async adjustForecast<P extends { readonly period: string; readonly demand: number }>(tenant: string, sku: string, points: readonly P[]) {
    const current = await this.deps.store.inForce(tenant, sku)
    return adjustPoints(points, new Map([...current].map(([period, s]) => [period, s.adjustment])))
  }

  /** The adjustments in force of many SKUs, by period, in the order asked (bulk export). */
  async inForceMany(tenant: string, skus: readonly string[]): Promise<Map<string, Adjustment>[]> {
    const sets = await this.deps.store.inForceMany(tenant, skus)
    return sets.map((set) => new Map([...set].map(([period, s]) => [period, s.adjustment])))
  }

  trail(tenant: string, sku: string, limit: number, cursor?: string) {
    return this.deps.store.trail(tenant, sku, limit, cursor)
  }

  /** The SKU's forecast value added, or null before any period was scored. */
  async valueAdded(tenant: string, sku: string) {
    const periods = await this.deps.valueAdded.records(tenant, sku)
    if (periods.length === 0) return null
    return { sku, ...summariseValueAdded(periods), byAuthor: valueAddedByAuthor(periods), periods }
  }

  /**
   * Forecast value added pooled over SKUs (a tag's): every scored period of every SKU in
   * one summary, and per author over the periods they adjusted, whichever SKU. `skus`
   * counts the SKUs with at least one scored period.
   */
  async pooledValueAdded(tenant: string, skus: AsyncIterable<readonly string[]>) {
    const all: ValueAddedRecord[] = []
    let scored = 0
    for await (const batch of skus) {
      for (let i = 0; i < batch.length; i += PARALLEL) {
        const lists = await Promise.all(batch.slice(i, i + PARALLEL).map((sku) => this.deps.valueAdded.records(tenant, sku)))
        for (const list of lists) {
          if (list.length > 0) scored++
          for (const r of list) all.push(r)
        }
      }
    }
    return { skus: scored, ...summariseValueAdded(all), byAuthor: valueAddedByAuthor(all) }
  }

  /** Forgets a SKU's adjustments in force and its value-added records (its history was deleted); the trail stays. */
  async forget(tenant: string, sku: string): Promise<void> {
    await Promise.all([this.deps.store.forget(tenant, sku), this.deps.valueAdded.forget(tenant, sku)])
  }

  /**
   * After histories were stored: records forecast value added for the periods
   * whose actuals arrived, then expires the adjustments of periods that passed.
   */
  async historiesStored(tenant: string, entries: readonly StoredHistoryEntry[]): Promise<void> {
    if (entries.length === 0) return
    const skus = entries.map((e) => e.sku)
    const [points, inForce] = await Promise.all([this.deps.latestPoints(tenant, skus), this.deps.store.inForceMany(tenant, skus)])
    const todo = entries.flatMap((e, i) => {
      const p = points[i] ?? null
      const a = inForce[i] ?? new Map<string, StoredAdjustment>()
      return p === null && a.size === 0 ? [] : [{ e, p, a }]
    })
    for (let i = 0; i < todo.length; i += PARALLEL) {
      await Promise.all(
        todo.slice(i, i + PARALLEL).map(async ({ e, p, a }) => {
          if (p !== null) await this.deps.valueAdded.record(tenant, e.sku, valueAddedRecords(e, p, a))
          await this.expire(tenant, e, a, p?.runId ?? null, p?.points ?? new Map())
        }),
      )
    }
  }

  private async expire(
    tenant: string,
    e: StoredHistoryEntry,
    inForce: ReadonlyMap<string, StoredAdjustment>,
    runId: string | null,
    points: ReadonlyMap<string, number>,
  ): Promise<void> {
    const through = lastOrdinal(e)
    if (through === null) return
    const at = this.now()
    const writes: AdjustmentWrite[] = []
    for (const [period, s] of inForce) {
      const ordinal = ordinalOr(period, e.frequency)
      if (ordinal === null || ordinal > through) continue
      const entry = trailEntry('expired', period, s.adjustment, s, null, points.get(period) ?? null, runId, at)
      writes.push({ period, expected: s.stored, next: null, entry })
    }
    // A conflict means a planner changed them meanwhile: the next history write expires them.
    await this.deps.store.apply(tenant, e.sku, writes)
  }
}

function trailEntry(
  action: TrailEntry['action'],
  period: string,
  who: { readonly author: string; readonly reason: string },
  before: StoredAdjustment | null,
  after: AdjustmentChange | null,
  statisticalDemand: number | null,
  runId: string | null,
  at: string,
): TrailEntry {
  const beforeChange = before?.adjustment.change ?? null
  return {
    at,
    action,
    period,
    author: who.author,
    reason: who.reason,
    before: beforeChange,
    after,
    statisticalDemand,
    finalDemandBefore: statisticalDemand === null ? null : finalDemandOf(statisticalDemand, beforeChange),
    finalDemandAfter: statisticalDemand === null ? null : finalDemandOf(statisticalDemand, after),
    runId,
  }
}

/**
 * The value-added records of the forecast periods a history now has actuals
 * for. The naive forecast is the demand of the period just before the
 * forecast's first period (the last value known when it was made); periods
 * are scored only when that value and the actual are known.
 */
export function valueAddedRecords(
  h: StoredHistoryEntry,
  forecast: { readonly runId: string; readonly points: ReadonlyMap<string, number> },
  inForce: ReadonlyMap<string, StoredAdjustment>,
): ValueAddedRecord[] {
  const first = ordinalOr(h.firstPeriod, h.frequency)
  if (first === null) return []
  const labelled = [...forecast.points].flatMap(([period, demand]) => {
    const ordinal = ordinalOr(period, h.frequency)
    return ordinal === null ? [] : [{ period, ordinal, demand }]
  })
  if (labelled.length === 0) return []
  const origin = Math.min(...labelled.map((p) => p.ordinal)) - 1
  const naive = h.demand[origin - first]
  if (naive === undefined || naive === null) return []
  const out: ValueAddedRecord[] = []
  for (const { period, ordinal, demand } of labelled) {
    const actual = h.demand[ordinal - first]
    if (actual === undefined || actual === null) continue
    const a = inForce.get(period)?.adjustment ?? null
    out.push({
      period,
      runId: forecast.runId,
      statisticalDemand: demand,
      finalDemand: finalDemandOf(demand, a?.change ?? null),
      naiveDemand: naive,
      actualDemand: actual,
      author: a?.author ?? null,
    })
  }
  return out
}
