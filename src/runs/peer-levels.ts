import type { ForecastResult } from '../engine/index.js'

/**
 * New products with a short history, forecast with help from similar SKUs (a run's
 * `newProductPeers`): the SKUs that carry the same tag (of a chosen prefix, such
 * as `category:`) and have a history of their own. Pure: no I/O.
 *
 * The peer level is the median, over the peers of the same frequency with at least
 * NEW_PRODUCT_PERIODS periods, of each one's mean demand over its last season (the
 * median keeps one large or dead peer from moving it). A new product's forecast is
 * then blended with it, each period: w * own + (1 - w) * peer level, with
 * w = n / (n + PEER_WEIGHT_PERIODS) for n periods of its own history. So the peers
 * count as PEER_WEIGHT_PERIODS periods of evidence and the SKU's own history takes
 * over as it grows: a credibility weighting in the sense of Buhlmann (1967; cited
 * from memory). The weight of 6 periods is our choice, not a published value.
 */

/** A history shorter than this is a new product (the engine's short-history warning starts at the same length). */
export const NEW_PRODUCT_PERIODS = 10
/** Periods of own history the peer level counts as. */
export const PEER_WEIGHT_PERIODS = 6
/** Fewest peers for a peer level; fewer and the new product is forecast alone. */
export const MIN_PEERS = 3

export interface PeerLevel {
  readonly tag: string
  readonly level: number
  readonly peers: number
}

/** The first of the SKU's tags starting with `prefix`, or null. */
export function peerTagOf(tags: readonly string[], prefix: string): string | null {
  return tags.find((t) => t.startsWith(prefix)) ?? null
}

/** Mean of the last `span` known values (null: missing periods are skipped); null when there are none. */
export function recentLevel(demand: readonly (number | null)[], span: number): number | null {
  let sum = 0
  let n = 0
  for (let i = demand.length - 1; i >= 0 && n < span; i--) {
    const v = demand[i]
    if (v === null || v === undefined) continue
    sum += v
    n++
  }
  return n === 0 ? null : sum / n
}

/** The median of the peers' levels; null with fewer than MIN_PEERS. */
export function peerLevel(tag: string, levels: readonly number[]): PeerLevel | null {
  if (levels.length < MIN_PEERS) return null
  const sorted = [...levels].sort((a, b) => a - b)
  const mid = sorted.length >> 1
  const level = sorted.length % 2 === 1 ? sorted[mid]! : (sorted[mid - 1]! + sorted[mid]!) / 2
  return { tag, level, peers: levels.length }
}

/** The weight of a new product's own forecast, n / (n + PEER_WEIGHT_PERIODS). */
export function ownWeight(historyLength: number): number {
  return historyLength / (historyLength + PEER_WEIGHT_PERIODS)
}

/**
 * The result with each point blended with the peer level; interval bounds and
 * quantiles move with their point, so the spreads stay the model's (already widened
 * for a short history by the engine). Bounds below zero become zero unless negatives
 * are allowed.
 */
export function blendWithPeers(result: ForecastResult, peer: PeerLevel, historyLength: number, allowNegative: boolean): ForecastResult {
  const w = ownWeight(historyLength)
  const floor = (v: number) => (allowNegative ? v : Math.max(0, v))
  return {
    ...result,
    forecast: result.forecast.map((p) => {
      const demand = w * p.demand + (1 - w) * peer.level
      const shift = demand - p.demand
      return {
        ...p,
        demand,
        intervals: p.intervals.map((i) => ({ ...i, low: floor(i.low + shift), high: floor(i.high + shift) })),
        ...(p.quantiles ? { quantiles: p.quantiles.map((q) => ({ ...q, demand: floor(q.demand + shift) })) } : {}),
      }
    }),
  }
}
