import type { MetricName, ModelName } from '../../engine/index.js'
import type { RedisClient } from '../redis.js'
import { CursorError, decodeCursor, encodeCursor } from '../paging.js'
import { decodeSummaryRecord } from './summary-record.js'
import type { SummaryKeys } from './sku-summary-store.js'

/**
 * Which SKUs with a stored history match the SKU list's filters, a page at a time,
 * ordered by SKU (byte order). The most selective index set in the cursor's
 * range (fewest members, ZLEXCOUNT) is walked with ZRANGEBYLEX in batches; the
 * other conditions are checked in bulk per batch (ZMSCORE on the history, tag
 * and exception sets, one HMGET of the summaries). An error range has no set in
 * SKU order; when few SKUs fall in it they are read whole (ZRANGEBYSCORE),
 * sorted and walked instead. A request stops at `limit`
 * matches or after MAX_EXAMINED rows of the walked set, whichever comes first,
 * and then returns a cursor to go on from: a page may hold fewer than `limit`
 * items (even none) while nextCursor is not null.
 */
export interface SkuFilter {
  readonly tag?: string
  readonly prefix?: string
  readonly model?: ModelName
  readonly warning?: string
  /** true: the newest published item failed; false: it did not (the SKU has a summary). */
  readonly failed?: boolean
  /** true: on the accuracy exception list; false: not on it. */
  readonly exception?: boolean
  /** The measure minError and maxError apply to (default mase). */
  readonly errorMeasure?: MetricName
  readonly minError?: number
  readonly maxError?: number
}

export interface SkuListKeys {
  /** Every SKU with a stored history (zset, score 0). */
  readonly skus: string
  tag(tag: string): string
  readonly exceptions: string
  readonly summaries: SummaryKeys
}

/** Rows of the walked set one request examines at most (keeps a sparse filter's request short). */
export const MAX_EXAMINED = 10_000
/** Rows read per batch when conditions are checked. */
export const BATCH = 1_000
/** Most SKUs in an error range that are read whole and sorted instead of walking a set in SKU order. */
export const MAX_FEW_IN_ERROR_RANGE = 5_000

/** True when a filter needs the summaries (a model, warning, failed or error condition). */
export function needsSummaries(f: SkuFilter): boolean {
  return f.model !== undefined || f.warning !== undefined || f.failed !== undefined || f.minError !== undefined || f.maxError !== undefined
}

/**
 * One page of matching SKUs.
 * @throws CursorError on a cursor this service did not issue
 */
export async function findSkus(
  redis: RedisClient,
  k: SkuListKeys,
  filter: SkuFilter,
  page: { readonly limit: number; readonly cursor?: string },
): Promise<{ skus: string[]; nextCursor: string | null }> {
  const prefix = filter.prefix
  let min: string = prefix === undefined ? '-' : `[${prefix}`
  if (page.cursor !== undefined) {
    const after = decodeCursor(page.cursor)
    // A cursor of the list by error (error and SKU on two lines) does not page the list by SKU.
    if (after.includes('\n')) throw new CursorError()
    min = `(${after}`
  }
  const max: string | Buffer = prefix === undefined ? '+' : Buffer.concat([Buffer.from(`[${prefix}`), Buffer.from([0xff])])
  const limit = Math.max(1, Math.floor(page.limit))

  // Sets a SKU must belong to; the smallest in range is walked, the others checked. A tag set
  // holds only SKUs with a history, so it stands in for the set of every SKU.
  const stored = filter.tag === undefined ? k.skus : k.tag(filter.tag)
  const byMembership = filter.exception === true ? [stored, k.exceptions] : [stored]
  const bySummary: string[] = []
  if (filter.model !== undefined) bySummary.push(k.summaries.model(filter.model))
  if (filter.warning !== undefined) bySummary.push(k.summaries.warning(filter.warning))
  if (filter.failed === true) bySummary.push(k.summaries.failed)
  const within = [...byMembership, ...bySummary]
  const errorRange = filter.minError !== undefined || filter.maxError !== undefined
  const counts = within.length === 1 && !errorRange ? [0] : await Promise.all(within.map((key) => redis.zlexcount(key, min, max)))
  let driver = within[counts.indexOf(Math.min(...counts))]!
  // An error range has no set in SKU order; when few SKUs fall in it, they are read whole and
  // sorted, and the walk covers only them.
  const few = errorRange ? await errorRangeIfFew(redis, k, filter, Math.min(...counts), page.cursor, prefix) : null
  if (few !== null) driver = ''
  // Summary sets need no membership check: the summary itself is checked.
  const members = byMembership.filter((key) => key !== driver)
  const absent = filter.exception === false ? [k.exceptions] : []
  const summaries = needsSummaries(filter)
  const unchecked = members.length === 0 && absent.length === 0 && !summaries
  let taken = 0
  const read = async (size: number): Promise<string[]> => {
    if (few === null) return redis.zrangebylex(driver, min, max, 'LIMIT', 0, size)
    taken += size
    return few.slice(taken - size, taken)
  }

  const out: string[] = []
  let examined = 0
  let last: string | undefined
  let more = false
  let exhausted = false
  while (out.length < limit && examined < MAX_EXAMINED) {
    const size = unchecked ? limit - out.length + 1 : Math.min(BATCH, MAX_EXAMINED - examined)
    const batch = await read(size)
    exhausted = batch.length < size
    if (batch.length === 0) break
    const keep = await matches(redis, k, filter, batch, members, absent, summaries)
    for (let i = 0; i < batch.length; i++) {
      if (keep[i]) {
        if (out.length === limit) {
          more = true
          break
        }
        out.push(batch[i]!)
      }
      last = batch[i]
      examined++
    }
    if (more || exhausted) break
    min = `(${batch[batch.length - 1]}`
  }
  let nextCursor: string | null = null
  if (more) nextCursor = encodeCursor(out[out.length - 1]!)
  else if (!exhausted && last !== undefined) nextCursor = encodeCursor(last)
  return { skus: out, nextCursor }
}

/**
 * The SKUs whose error on the filter's measure lies in its range, after the cursor and with the
 * prefix, in byte order; null when more than MAX_FEW_IN_ERROR_RANGE SKUs (or more than the
 * smallest set to walk) have an error in the range, so reading them whole would not pay.
 */
async function errorRangeIfFew(
  redis: RedisClient,
  k: SkuListKeys,
  f: SkuFilter,
  smallestSet: number,
  cursor: string | undefined,
  prefix: string | undefined,
): Promise<string[] | null> {
  const key = k.summaries.error(f.errorMeasure ?? 'mase')
  const lo = f.minError === undefined ? '-inf' : String(f.minError)
  const hi = f.maxError === undefined ? '+inf' : String(f.maxError)
  const n = await redis.zcount(key, lo, hi)
  if (n > MAX_FEW_IN_ERROR_RANGE || n >= smallestSet) return null
  const after = cursor === undefined ? null : Buffer.from(decodeCursor(cursor))
  return (await redis.zrangebyscore(key, lo, hi))
    .map((sku) => Buffer.from(sku))
    .filter((b) => (after === null || Buffer.compare(b, after) > 0) && (prefix === undefined || b.subarray(0, Buffer.byteLength(prefix)).equals(Buffer.from(prefix))))
    .sort(Buffer.compare)
    .map((b) => b.toString())
}

/** Per SKU of the batch: does it meet every condition the walked set does not already guarantee? */
export async function matches(
  redis: RedisClient,
  k: SkuListKeys,
  f: SkuFilter,
  batch: readonly string[],
  members: readonly string[],
  absent: readonly string[],
  summaries: boolean,
): Promise<boolean[]> {
  if (members.length === 0 && absent.length === 0 && !summaries) return batch.map(() => true)
  const [inSets, outSets, records] = await Promise.all([
    Promise.all(members.map((key) => redis.zmscore(key, ...batch))),
    Promise.all(absent.map((key) => redis.zmscore(key, ...batch))),
    summaries ? redis.hmget(k.summaries.all, ...batch) : Promise.resolve([]),
  ])
  const measure = f.errorMeasure ?? 'mase'
  return batch.map((sku, i) => {
    if (inSets.some((scores) => scores[i] === null)) return false
    if (outSets.some((scores) => scores[i] !== null)) return false
    if (!summaries) return true
    const raw = records[i]
    if (raw == null) return false
    const s = decodeSummaryRecord(sku, raw).summary
    if (f.model !== undefined && s.model !== f.model) return false
    if (f.warning !== undefined && !s.warnings.includes(f.warning)) return false
    if (f.failed !== undefined && s.failed !== f.failed) return false
    if (f.minError !== undefined || f.maxError !== undefined) {
      if (s.error === null || s.error.measure !== measure) return false
      if (f.minError !== undefined && s.error.value < f.minError) return false
      if (f.maxError !== undefined && s.error.value > f.maxError) return false
    }
    return true
  })
}
