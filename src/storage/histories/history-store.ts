import { randomUUID } from 'node:crypto'
import { z } from 'zod'
import type { RedisClient } from '../redis.js'
import { countOf, decodeJson } from '../decode.js'
import { FREQUENCIES, formatPeriod, parsePeriod, type Frequency } from '../../engine/index.js'
import type { PendingHistory } from '../../history/accumulator.js'
import type { FeedBatch, HistoryWriter, WriteOutcome } from '../../history/ingest.js'
import type { HistoryData } from '../../history/types.js'
import type { UploadStaging } from '../../history/staged-upload.js'
import { RedisUploadStaging } from './upload-staging.js'
import { decodeCursor, encodeCursor } from '../paging.js'
import { exceptionsKey, isValidTenant } from '../keys.js'
import { findSkus, type SkuFilter } from '../skus/sku-list.js'
import { findSkusByError } from '../skus/sku-list-by-error.js'
import { summaryKeys } from '../skus/sku-summary-store.js'
import { decodeSummaryRecord } from '../skus/summary-record.js'
import type { SkuSummary } from '../../runs/sku-summary.js'
import { StockPolicy, type RunScope } from '../../schemas/run.js'

/**
 * Stored demand histories per tenant, in Redis. Histories are master data: no TTL.
 *
 *   hist:{T}:data      hash  sku -> JSON array of demand per period (null = missing period)
 *   hist:{T}:meta      hash  sku -> JSON {f: frequency, s: firstPeriod, n: periodCount, t: tags, u: updatedAt, r: revision, p?: stock policy}
 *   hist:{T}:skus      zset  every SKU with a history, score 0 (ordered by ZRANGEBYLEX)
 *   hist:{T}:tag:<tag> zset  SKUs carrying the tag, score 0
 *   hist:{T}:batch:<id> set  SKUs a feed batch has written (expires: a resent batch is not added twice)
 *   hist:{T}:bytes     string  bytes of the data and meta fields held (the stored-bytes quota)
 *   hist:{T}:tags      hash  tag -> SKUs carrying it (a tag leaves when its last SKU does)
 *   hist:{T}:stage:<upload>:<part> list  a large upload's rows while it arrives (upload-staging.ts; expires)
 *   hist:{T}:written   zset  sku -> when its history was last written, in ms (PUT and uploads; a
 *                            closing's carry-forward leaves it); idle-history retention reads it
 *   hist:{T}:written-backfill string  the last SKU given a `written` entry by the backfill of
 *                            histories stored before that index existed; 'done' once complete
 *   hist:{T}:removed   set   SKUs whose history retention deleted but whose records (latest
 *                            forecast, accuracy, adjustments) are not forgotten yet
 *
 * under `${prefix}:t:${tenant}:`. The tenant sits in a hash tag so one
 * SKU's write (a Lua script over data, meta, the index and tag sets) stays on
 * one slot of a cluster. A write is atomic per SKU and checks the revision it
 * read (optimistic concurrency), so concurrent uploads never lose a write.
 */

/** The Redis keys of one tenant's histories (layout above). */
export interface HistoryKeys {
  readonly data: string
  readonly meta: string
  readonly skus: string
  readonly bytes: string
  readonly tagCounts: string
  readonly written: string
  readonly writtenBackfill: string
  readonly removed: string
  tag(tag: string): string
  batch(id: string): string
  stage(upload: string, part: number): string
}

export function historyKeys(prefix: string, tenant: string): HistoryKeys {
  if (!isValidTenant(tenant)) throw new Error(`invalid tenant for a Redis key: ${JSON.stringify(tenant)}`)
  const base = `${prefix}:t:${tenant}:hist:{${tenant}}`
  return {
    data: `${base}:data`,
    meta: `${base}:meta`,
    skus: `${base}:skus`,
    bytes: `${base}:bytes`,
    tagCounts: `${base}:tags`,
    written: `${base}:written`,
    writtenBackfill: `${base}:written-backfill`,
    removed: `${base}:removed`,
    tag: (t: string) => `${base}:tag:${t}`,
    batch: (id: string) => `${base}:batch:${id}`,
    stage: (upload: string, part: number) => `${base}:stage:${upload}:${part}`,
  }
}

export interface StoredHistory extends HistoryData {
  readonly sku: string
  readonly updatedAt: string
}

export interface HistorySummary {
  readonly sku: string
  readonly frequency: Frequency
  readonly firstPeriod: string
  readonly lastPeriod: string
  readonly periodCount: number
  readonly tags: readonly string[]
  readonly updatedAt: string
}

/** A history summary in the SKU list, with the SKU's newest published outcome when it has one. */
export interface ListedSku extends HistorySummary {
  readonly published?: SkuSummary & { readonly runId: string }
}

interface Meta {
  readonly f: Frequency
  readonly s: string
  readonly n: number
  readonly t: readonly string[]
  readonly u: string
  readonly r: number
  readonly p?: StockPolicy
}

/** A meta field as stored: frequency, first period, period count, tags, updated at, revision. */
const MetaRecord = z.object({
  f: z.enum(FREQUENCIES),
  s: z.string().min(1),
  n: z.number().int().min(1),
  t: z.array(z.string()),
  u: z.string(),
  r: z.number().int().min(0),
  p: StockPolicy.optional(),
})

const decodeMeta = (sku: string, raw: string): Meta => decodeJson(MetaRecord, raw, `history meta of SKU ${sku}`)

const DemandRecord = z.array(z.number().nullable())

/**
 * A demand field as stored. Histories are read in bulk for runs, so the plain
 * loop checks the values; the schema runs only to say what is wrong.
 */
function decodeDemand(sku: string, raw: string): (number | null)[] {
  const what = `history demand of SKU ${sku}`
  const value = decodeJson(z.unknown(), raw, what)
  if (Array.isArray(value) && value.every((v) => v === null || typeof v === 'number')) return value as (number | null)[]
  return decodeJson(DemandRecord, raw, what)
}

/**
 * KEYS: data, meta, skus, bytes, tag counts, then nNew new-tag sets, then nOld old-tag sets, then the batch set when a batch is given,
 * then the last-write index (always last).
 * ARGV: sku, expected meta ('' when absent), new meta, demand JSON, nNew, nOld, batch TTL in seconds ('' without a batch),
 * stored-bytes quota (0: none), then the nNew new tags, then the nOld old tags (names of the sets, for the counts),
 * then the write time in ms (always last; '' for a carry-forward, which leaves the last-write time as it was).
 * Returns 1 when written, 0 when the meta changed since it was read, 2 when the batch already wrote this SKU,
 * 3 when the write would grow the tenant's stored bytes past the quota (nothing written; a write that
 * shrinks or keeps the size always passes, so a tenant over its quota can still correct and trim).
 * The batch check and mark sit in the same script as the write, so a batch resent after a partial failure
 * adds exactly the SKUs it had not written yet; the byte count and the last-write time change in the same step as the fields.
 */
const PUT_HISTORY = `
local nNew = tonumber(ARGV[5])
local nOld = tonumber(ARGV[6])
local batchKey = nil
if ARGV[7] ~= '' then
  batchKey = KEYS[5 + nNew + nOld + 1]
  if redis.call('SISMEMBER', batchKey, ARGV[1]) == 1 then return 2 end
end
local cur = redis.call('HGET', KEYS[2], ARGV[1])
if (cur or '') ~= ARGV[2] then return 0 end
local delta = #ARGV[4] + #ARGV[3] - redis.call('HSTRLEN', KEYS[1], ARGV[1]) - #(cur or '')
local quota = tonumber(ARGV[8])
if quota > 0 and delta > 0 and tonumber(redis.call('GET', KEYS[4]) or '0') + delta > quota then return 3 end
redis.call('INCRBY', KEYS[4], delta)
redis.call('HSET', KEYS[1], ARGV[1], ARGV[4])
redis.call('HSET', KEYS[2], ARGV[1], ARGV[3])
redis.call('ZADD', KEYS[3], 0, ARGV[1])
if ARGV[#ARGV] ~= '' then redis.call('ZADD', KEYS[#KEYS], tonumber(ARGV[#ARGV]), ARGV[1]) end
for i = 1, nOld do
  if redis.call('ZREM', KEYS[5 + nNew + i], ARGV[1]) == 1 and redis.call('HINCRBY', KEYS[5], ARGV[8 + nNew + i], -1) <= 0 then
    redis.call('HDEL', KEYS[5], ARGV[8 + nNew + i])
  end
end
for i = 1, nNew do
  if redis.call('ZADD', KEYS[5 + i], 0, ARGV[1]) == 1 then redis.call('HINCRBY', KEYS[5], ARGV[8 + i], 1) end
end
if batchKey then
  redis.call('SADD', batchKey, ARGV[1])
  redis.call('EXPIRE', batchKey, tonumber(ARGV[7]))
end
return 1
`
const PUT_COMMAND = 'almanacPutHistory'

/**
 * KEYS: data, meta, skus, bytes, tag counts, last-write index, removed set, then the SKU's tag sets.
 * ARGV: sku, expected meta, idle cutoff in ms ('' for a delete on request), then the SKU's tags.
 * Returns 1 when deleted, 0 when the meta changed since it was read, 2 when a cutoff is given and the SKU
 * was written after it or has no last-write time (retention never deletes on missing data). A retention
 * delete also lists the SKU in the removed set in the same step, so its records are forgotten even if
 * the process stops right after.
 */
const DELETE_HISTORY = `
if (redis.call('HGET', KEYS[2], ARGV[1]) or '') ~= ARGV[2] then return 0 end
if ARGV[3] ~= '' then
  local written = redis.call('ZSCORE', KEYS[6], ARGV[1])
  if not written or tonumber(written) > tonumber(ARGV[3]) then return 2 end
  redis.call('SADD', KEYS[7], ARGV[1])
end
redis.call('DECRBY', KEYS[4], redis.call('HSTRLEN', KEYS[1], ARGV[1]) + #ARGV[2])
redis.call('HDEL', KEYS[1], ARGV[1])
redis.call('HDEL', KEYS[2], ARGV[1])
redis.call('ZREM', KEYS[3], ARGV[1])
redis.call('ZREM', KEYS[6], ARGV[1])
for i = 8, #KEYS do
  if redis.call('ZREM', KEYS[i], ARGV[1]) == 1 and redis.call('HINCRBY', KEYS[5], ARGV[i - 4], -1) <= 0 then
    redis.call('HDEL', KEYS[5], ARGV[i - 4])
  end
end
return 1
`
const DELETE_COMMAND = 'almanacDeleteHistory'
/** Rounds of read-merge-write per SKU before a SKU is reported as contended (with a short random pause between). */
const MAX_ATTEMPTS = 10

/** Why a write was refused by the stored-bytes quota. */
export function storedBytesQuotaReason(quota: number): string {
  return `the tenant's stored histories would exceed ${quota} bytes (QUOTA_STORED_BYTES_PER_TENANT); delete SKUs or raise the quota`
}

/** A write refused by the stored-bytes quota (nothing was written). */
export class StoredBytesQuotaError extends Error {}

export interface HistoryStoreOptions {
  readonly prefix: string
  readonly now?: () => Date
  /**
   * Most bytes of history data and metadata one tenant may hold (0 or absent: no quota). Writes
   * that would grow past it are refused; writes that shrink or keep the size always pass.
   */
  readonly maxStoredBytes?: number
}

export class HistoryStore implements HistoryWriter {
  constructor(
    private readonly redis: RedisClient,
    private readonly opts: HistoryStoreOptions,
  ) {
    if (!(PUT_COMMAND in redis)) redis.defineCommand(PUT_COMMAND, { lua: PUT_HISTORY })
    if (!(DELETE_COMMAND in redis)) redis.defineCommand(DELETE_COMMAND, { lua: DELETE_HISTORY })
  }

  private keys(tenant: string): HistoryKeys {
    return historyKeys(this.opts.prefix, tenant)
  }

  /** A staging area for one streamed upload of the tenant (its rows wait there until the body is read). */
  uploadStaging(tenant: string): UploadStaging {
    const upload = randomUUID()
    const stage = this.keys(tenant).stage
    return new RedisUploadStaging(this.redis, (part) => stage(upload, part))
  }

  async get(tenant: string, sku: string): Promise<StoredHistory | null> {
    return (await this.getMany(tenant, [sku]))[0] ?? null
  }

  /** Histories in the order asked, null where a SKU has none. */
  async getMany(tenant: string, skus: readonly string[]): Promise<(StoredHistory | null)[]> {
    if (skus.length === 0 || !isValidTenant(tenant)) return skus.map(() => null)
    const k = this.keys(tenant)
    const [metas, datas] = await Promise.all([this.redis.hmget(k.meta, ...skus), this.redis.hmget(k.data, ...skus)])
    return skus.map((sku, i) => decode(sku, metas[i] ?? null, datas[i] ?? null))
  }

  /** Bytes of history data and metadata the tenant holds, as the stored-bytes quota counts them. */
  async storedBytes(tenant: string): Promise<number> {
    if (!isValidTenant(tenant)) return 0
    return Math.max(0, Number((await this.redis.get(this.keys(tenant).bytes)) ?? 0))
  }

  /**
   * The tenant's tags with how many stored SKUs carry each, ordered by tag (byte
   * order), a page at a time. Read whole from one hash: tags are few next to SKUs.
   * @throws CursorError on a cursor this service did not issue
   */
  async tags(tenant: string, page: { readonly limit: number; readonly cursor?: string }): Promise<{ items: { tag: string; skus: number }[]; nextCursor: string | null }> {
    const after = page.cursor === undefined ? undefined : Buffer.from(decodeCursor(page.cursor))
    if (!isValidTenant(tenant)) return { items: [], nextCursor: null }
    const all = await this.redis.hgetall(this.keys(tenant).tagCounts)
    const sorted = Object.entries(all)
      .map(([tag, n]) => ({ tag, skus: countOf(n, `SKU count of tag ${tag}`) }))
      .filter((t) => t.skus > 0 && (after === undefined || Buffer.compare(Buffer.from(t.tag), after) > 0))
      .sort((a, b) => Buffer.compare(Buffer.from(a.tag), Buffer.from(b.tag)))
    const items = sorted.slice(0, Math.max(1, Math.floor(page.limit)))
    const last = items[items.length - 1]
    return { items, nextCursor: sorted.length > items.length && last !== undefined ? encodeCursor(last.tag) : null }
  }

  /** How many SKUs of the tenant have a stored history. */
  async count(tenant: string): Promise<number> {
    return isValidTenant(tenant) ? this.redis.zcard(this.keys(tenant).skus) : 0
  }

  /** SKUs of the list without a stored history, in list order. */
  async missing(tenant: string, skus: readonly string[]): Promise<string[]> {
    const k = this.keys(tenant)
    const out: string[] = []
    for (let i = 0; i < skus.length; i += 1000) {
      const part = skus.slice(i, i + 1000)
      const scores = await this.redis.zmscore(k.skus, ...part)
      part.forEach((sku, j) => {
        if (scores[j] === null) out.push(sku)
      })
    }
    return out
  }

  /**
   * Delete one SKU's history, its place in the SKU index and its tag sets, atomically
   * (retried if the SKU is written meanwhile).
   * @returns false when the SKU had no history
   */
  async delete(tenant: string, sku: string): Promise<boolean> {
    return (await this.deleteWhen(tenant, sku, '')) === 'deleted'
  }

  /**
   * Retention: delete one SKU's history as delete() does, but only if its last write
   * (the `written` index) is at or before `cutoffMs`, checked in the same script as the
   * delete, so a write that lands between the sweep's read and this call wins. The SKU
   * joins the removed set in that step (retention/sweep.ts then forgets its records).
   * @returns 'deleted'; 'written' when it was written after the cutoff or has no last-write
   * time; 'gone' when it had no history
   */
  async deleteIfIdle(tenant: string, sku: string, cutoffMs: number): Promise<'deleted' | 'written' | 'gone'> {
    return this.deleteWhen(tenant, sku, String(Math.floor(cutoffMs)))
  }

  private async deleteWhen(tenant: string, sku: string, cutoff: string): Promise<'deleted' | 'written' | 'gone'> {
    const k = this.keys(tenant)
    for (let attempt = 0; attempt < MAX_ATTEMPTS; attempt++) {
      const raw = await this.redis.hget(k.meta, sku)
      if (raw === null && cutoff === '') return 'gone'
      const tags = raw === null ? [] : decodeMeta(sku, raw).t
      const keys = [k.data, k.meta, k.skus, k.bytes, k.tagCounts, k.written, k.removed, ...tags.map(k.tag)]
      const run = (this.redis as unknown as Record<string, (...a: unknown[]) => Promise<unknown>>)[DELETE_COMMAND]!
      const outcome = await run.call(this.redis, keys.length, ...keys, sku, raw ?? '', cutoff, ...tags)
      // Without a history the script only drops a last-write time left without one (and lists the SKU so any stray records go too).
      if (outcome === 1) return raw === null ? 'gone' : 'deleted'
      if (outcome === 2) return 'written'
    }
    throw new Error(`the history of SKU ${sku} changed concurrently several times; retry the delete`)
  }

  /** Replace one SKU's history; says whether it was created. */
  async put(tenant: string, sku: string, data: HistoryData): Promise<{ outcome: 'created' | 'updated'; history: StoredHistory }> {
    const pending = { sku, incoming: { frequency: data.frequency, startOrdinal: 0, demand: [] }, rows: 0, origin: {} }
    const [r] = await this.apply(tenant, [pending], () => ({ data }), { readValues: false })
    if (r && 'reason' in r && r.reason === storedBytesQuotaReason(this.opts.maxStoredBytes ?? 0)) throw new StoredBytesQuotaError(r.reason)
    if (!r || 'reason' in r || r.outcome === 'already-applied') throw new Error(r && 'reason' in r ? r.reason : 'history not written')
    return { outcome: r.outcome, history: (await this.get(tenant, sku))! }
  }

  async apply(
    tenant: string,
    batch: readonly PendingHistory[],
    merge: (current: HistoryData | null, pending: PendingHistory) => { data: HistoryData } | { reason: string },
    opts: { readonly readValues?: boolean; readonly feedBatch?: FeedBatch; readonly carriedForward?: boolean } = {},
  ): Promise<WriteOutcome[]> {
    const k = this.keys(tenant)
    const feed = opts.feedBatch
    const batchKeys = feed === undefined ? [] : [k.batch(feed.id)]
    const batchTtl = feed === undefined ? '' : String(Math.max(1, Math.floor(feed.ttlSeconds)))
    // A merge that replaces values needs only the metadata (tags, revision): skip reading the values.
    const readValues = opts.readValues ?? true
    const results: WriteOutcome[] = new Array(batch.length)
    const quota = this.opts.maxStoredBytes ?? 0
    let todo = batch.map((_, i) => i)
    for (let attempt = 0; attempt < MAX_ATTEMPTS && todo.length > 0; attempt++) {
      if (attempt > 0) await new Promise((r) => setTimeout(r, Math.random() * 5 * attempt))
      const skus = todo.map((i) => batch[i]!.sku)
      const [metas, datas] = await Promise.all([
        this.redis.hmget(k.meta, ...skus),
        readValues ? this.redis.hmget(k.data, ...skus) : skus.map(() => '[]'),
      ])
      const pipe = this.redis.pipeline()
      const sent: number[] = []
      const writtenAt = this.opts.now?.() ?? new Date()
      const updatedAt = writtenAt.toISOString()
      todo.forEach((i, j) => {
        const p = batch[i]!
        const rawMeta = metas[j] ?? null
        const current = decode(p.sku, rawMeta, datas[j] ?? null)
        const merged = merge(current, p)
        if ('reason' in merged) {
          results[i] = merged
          return
        }
        const oldMeta = rawMeta === null ? null : decodeMeta(p.sku, rawMeta)
        const d = merged.data
        const meta: Meta = {
          f: d.frequency,
          s: d.firstPeriod,
          n: d.demand.length,
          t: d.tags,
          u: updatedAt,
          r: (oldMeta?.r ?? 0) + 1,
          ...(d.replenishment === undefined ? {} : { p: d.replenishment }),
        }
        const oldTags = oldMeta?.t ?? []
        const keys = [k.data, k.meta, k.skus, k.bytes, k.tagCounts, ...d.tags.map(k.tag), ...oldTags.map(k.tag), ...batchKeys, k.written]
        const args = [
          p.sku, rawMeta ?? '', JSON.stringify(meta), JSON.stringify(d.demand), d.tags.length, oldTags.length, batchTtl, quota,
          ...d.tags, ...oldTags, opts.carriedForward === true ? '' : writtenAt.getTime(),
        ]
        ;(pipe as unknown as Record<string, (...a: unknown[]) => unknown>)[PUT_COMMAND]!(keys.length, ...keys, ...args)
        results[i] = { outcome: rawMeta === null ? 'created' : 'updated' }
        sent.push(i)
      })
      const replies = sent.length > 0 ? ((await pipe.exec()) ?? []) : []
      todo = []
      replies.forEach(([err, written], j) => {
        if (err) throw err
        if (written === 2) results[sent[j]!] = { outcome: 'already-applied' }
        else if (written === 3) results[sent[j]!] = { reason: storedBytesQuotaReason(quota) }
        else if (written !== 1) todo.push(sent[j]!)
      })
    }
    for (const i of todo) results[i] = { reason: 'the history changed concurrently several times; retry the upload' }
    return results
  }

  /**
   * One page of history summaries ordered by SKU (byte order), optionally only
   * SKUs carrying `tag` and/or starting with `prefix`, and by their newest
   * published outcome (model, warning, failed, holdout error) or the exception
   * list (skus/sku-list.ts: a filtered page may hold fewer than `limit` items);
   * `sort: 'error'` orders by holdout error instead, largest first (skus/sku-list-by-error.ts).
   * Each item carries its published summary when it has one.
   * @throws CursorError on a cursor this service did not issue
   */
  async list(
    tenant: string,
    page: { readonly limit: number; readonly cursor?: string; readonly sort?: 'sku' | 'error' } & SkuFilter,
  ): Promise<{ items: ListedSku[]; nextCursor: string | null }> {
    const k = this.keys(tenant)
    const summaries = summaryKeys(this.opts.prefix, tenant)
    const find = page.sort === 'error' ? findSkusByError : findSkus
    const found = await find(this.redis, { skus: k.skus, tag: k.tag, exceptions: exceptionsKey(this.opts.prefix, tenant), summaries }, page, page)
    const skus = found.skus
    const [metas, records] =
      skus.length > 0 ? await Promise.all([this.redis.hmget(k.meta, ...skus), this.redis.hmget(summaries.all, ...skus)]) : [[], []]
    const items: ListedSku[] = []
    skus.forEach((sku, i) => {
      const raw = metas[i]
      if (raw == null) return
      const record = records[i] == null ? null : decodeSummaryRecord(sku, records[i]!)
      items.push({ ...summary(sku, decodeMeta(sku, raw)), ...(record === null ? {} : { published: { runId: record.runId, ...record.summary } }) })
    })
    return { items, nextCursor: found.nextCursor }
  }

  /** The SKUs carrying `tag`, by SKU, in batches of at most `batchSize` names (the tag's index only, no history read). */
  async *skusOfTag(tenant: string, tag: string, batchSize: number): AsyncGenerator<string[]> {
    const key = this.keys(tenant).tag(tag)
    const size = Math.max(1, Math.floor(batchSize))
    let min = '-'
    for (;;) {
      const skus = await this.redis.zrangebylex(key, min, '+', 'LIMIT', 0, size)
      if (skus.length > 0) yield skus
      if (skus.length < size) return
      min = `(${skus[skus.length - 1]}`
    }
  }

  /**
   * The histories of the scope in batches of at most `batchSize`, read page by
   * page (never the whole scope at once). SKUs in `skus` without a history are skipped.
   */
  async *select(tenant: string, scope: RunScope, batchSize: number): AsyncGenerator<StoredHistory[]> {
    const k = this.keys(tenant)
    const size = Math.max(1, Math.floor(batchSize))
    if ('skus' in scope) {
      for (let i = 0; i < scope.skus.length; i += size) {
        const found = (await this.getMany(tenant, scope.skus.slice(i, i + size))).filter((h): h is StoredHistory => h !== null)
        if (found.length > 0) yield found
      }
      return
    }
    let driver = k.skus
    let others: string[] = []
    if ('tags' in scope) {
      // Walk the smallest tag set; keep SKUs that also carry every other tag.
      const tagKeys = [...new Set(scope.tags)].map(k.tag)
      const sizes = await Promise.all(tagKeys.map((key) => this.redis.zcard(key)))
      const smallest = sizes.indexOf(Math.min(...sizes))
      driver = tagKeys[smallest]!
      others = tagKeys.filter((_, i) => i !== smallest)
    }
    let min = '-'
    for (;;) {
      const skus = await this.redis.zrangebylex(driver, min, '+', 'LIMIT', 0, size)
      if (skus.length === 0) return
      let keep = skus
      for (const other of others) {
        const scores = await this.redis.zmscore(other, ...keep)
        keep = keep.filter((_, i) => scores[i] !== null)
        if (keep.length === 0) break
      }
      if (keep.length > 0) {
        const found = (await this.getMany(tenant, keep)).filter((h): h is StoredHistory => h !== null)
        if (found.length > 0) yield found
      }
      if (skus.length < size) return
      min = `(${skus[skus.length - 1]}`
    }
  }
}

function decode(sku: string, rawMeta: string | null, rawData: string | null): StoredHistory | null {
  if (rawMeta === null || rawData === null) return null
  const meta = decodeMeta(sku, rawMeta)
  return {
    sku,
    frequency: meta.f,
    firstPeriod: meta.s,
    demand: decodeDemand(sku, rawData),
    tags: meta.t,
    updatedAt: meta.u,
    ...(meta.p === undefined ? {} : { replenishment: meta.p }),
  }
}

function summary(sku: string, meta: Meta): HistorySummary {
  return {
    sku,
    frequency: meta.f,
    firstPeriod: meta.s,
    lastPeriod: formatPeriod(parsePeriod(meta.s, meta.f) + meta.n - 1, meta.f),
    periodCount: meta.n,
    tags: meta.t,
    updatedAt: meta.u,
  }
}

