import type { RedisClient } from '../redis.js'
import type { ChunkSeriesItem, RunScope, RunSettings } from '../../schemas/run.js'
import { DEFAULT_SEASON_LENGTH, parsePeriod, type Frequency } from '../../engine/index.js'
import { NEW_PRODUCT_PERIODS, peerLevel, peerTagOf, recentLevel, type PeerLevel } from '../../runs/peer-levels.js'
import type { ClosedOrdinals } from '../erp/closing-store.js'
import { decodeRunRecord, newRunFields } from './run-hash.js'
import { RunStats } from './stats-store.js'
import type { HistoryStore } from '../histories/history-store.js'
import { runKeys } from '../keys.js'
import type { RunStoreOptions } from './run-store.js'
import type { RunOrigin, RunRecord } from '../../runs/contract.js'
import { RunIndex } from './run-index.js'

/**
 * Create a run over stored histories: the scope is read page by page
 * (at most `chunkSize` histories at a time) and each full chunk is written as
 * a chunk input at once, so memory holds one chunk, never the whole
 * scope. The run record goes last, when the total is known, just after its
 * entry in the tenant's run index; inputs of a run that never got its record
 * expire with the result TTL (and its index entry is skipped, then removed).
 * Each stored history becomes the series `{ sku, firstPeriod, demand, frequency }`,
 * exactly as if it had been sent inline, except for open periods (after the
 * tenant's closed-through period of its frequency, `closed`): they are cut off
 * unless `settings.openPeriods` is 'include', when the series keeps them and
 * says how many (`openPeriods`, for the item's warning). A history with nothing
 * but open periods is left out and counted (`openOnlySkus`). SKUs of
 * `scope.skus` without a stored history are skipped and counted (`missingSkus`).
 * With `settings.newProductPeers`, new products carrying a tag of its prefix are held
 * back until the scope is read, then written with the level of their peers
 * (every stored history of the tenant with the same tag and frequency and a history
 * of its own: runs/peer-levels.ts), in the run's last chunks.
 * Null when nothing matched (no run is created).
 */
export async function createRunFromHistories(
  redis: RedisClient,
  opts: RunStoreOptions,
  histories: HistoryStore,
  args: {
    readonly tenant: string
    readonly runId: string
    readonly settings: RunSettings
    readonly scope: RunScope
    readonly chunkSize: number
    readonly now: Date
    /** The tenant's closed-through period ordinals (closing-store.ts). */
    readonly closed?: ClosedOrdinals
    /** What started the run; default { kind: 'scope' }. */
    readonly origin?: RunOrigin
  },
): Promise<{ record: RunRecord; chunks: number; missingSkus: number; openOnlySkus: number } | null> {
  const { tenant, runId, settings, scope, chunkSize } = args
  const k = runKeys(opts.prefix, tenant, runId)
  let chunks = 0
  let total = 0
  let chunk: ChunkSeriesItem[] = []
  let openOnlySkus = 0
  let found = 0
  const flush = async () => {
    await redis.set(k.input(chunks), JSON.stringify(chunk), 'EX', opts.resultTtlSeconds)
    chunks++
    total += chunk.length
    chunk = []
  }
  const peersPrefix = settings.newProductPeers?.tagPrefix
  const heldBack: { item: ChunkSeriesItem; tag: string }[] = []
  for await (const batch of histories.select(tenant, scope, chunkSize)) {
    for (const h of batch) {
      found++
      const through = args.closed?.[h.frequency]
      const open = through === undefined ? 0 : parsePeriod(h.firstPeriod, h.frequency) + h.demand.length - 1 - through
      const series: ChunkSeriesItem = {
        sku: h.sku,
        firstPeriod: h.firstPeriod,
        demand: [...h.demand],
        frequency: h.frequency,
        ...(h.replenishment === undefined ? {} : { replenishment: h.replenishment }),
      }
      let item: ChunkSeriesItem
      if (open > 0 && settings.openPeriods === 'include') item = { ...series, openPeriods: open }
      else if (open <= 0) item = series
      else if (open < h.demand.length) item = { ...series, demand: series.demand.slice(0, h.demand.length - open) }
      else {
        openOnlySkus++
        continue
      }
      const peerTag = peersPrefix === undefined || item.demand.length >= NEW_PRODUCT_PERIODS ? null : peerTagOf(h.tags, peersPrefix)
      if (peerTag !== null) {
        heldBack.push({ item, tag: peerTag })
        continue
      }
      chunk.push(item)
      if (chunk.length >= chunkSize) await flush()
    }
  }
  if (heldBack.length > 0) {
    const levels = await peerLevels(histories, tenant, heldBack, chunkSize)
    for (const { item, tag } of heldBack) {
      const level = levels.get(`${item.frequency}|${tag}`)
      chunk.push(level ? { ...item, peerLevel: level } : item)
      if (chunk.length >= chunkSize) await flush()
    }
  }
  if (chunk.length > 0) await flush()
  if (total === 0) return null
  const fields = newRunFields({ id: runId, tenant, createdAt: args.now.toISOString(), total, chunks, settings, scope, origin: args.origin ?? { kind: 'scope' } })
  await new RunIndex(redis, opts).add(tenant, runId, args.now.getTime())
  const results = await redis.multi().hset(k.run, fields).expire(k.run, opts.recordTtlSeconds).exec()
  for (const [err] of results ?? []) if (err) throw err
  await new RunStats(redis, opts.prefix).created()
  return { record: decodeRunRecord(fields)!, chunks, missingSkus: 'skus' in scope ? scope.skus.length - found : 0, openOnlySkus }
}

/**
 * The peer level of each (frequency, tag) the held-back new products need, keyed
 * `frequency|tag`: read from every stored history of the tenant carrying the tag.
 */
async function peerLevels(
  histories: HistoryStore,
  tenant: string,
  heldBack: readonly { readonly item: ChunkSeriesItem; readonly tag: string }[],
  batchSize: number,
): Promise<Map<string, PeerLevel>> {
  const wanted = new Map<string, Set<Frequency>>()
  for (const { item, tag } of heldBack) {
    const f = item.frequency ?? 'month'
    wanted.set(tag, (wanted.get(tag) ?? new Set()).add(f))
  }
  const out = new Map<string, PeerLevel>()
  for (const [tag, frequencies] of wanted) {
    const levels = new Map<Frequency, number[]>()
    for await (const batch of histories.select(tenant, { tags: [tag] }, batchSize)) {
      for (const h of batch) {
        if (!frequencies.has(h.frequency) || h.demand.length < NEW_PRODUCT_PERIODS) continue
        const level = recentLevel(h.demand, Math.max(DEFAULT_SEASON_LENGTH[h.frequency], 1))
        if (level === null) continue
        const list = levels.get(h.frequency)
        if (list) list.push(level)
        else levels.set(h.frequency, [level])
      }
    }
    for (const [f, list] of levels) {
      const level = peerLevel(tag, list)
      if (level) out.set(`${f}|${tag}`, level)
    }
  }
  return out
}
