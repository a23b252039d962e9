import type { RedisClient } from '../redis.js'
import { CursorError, decodeCursor, encodeCursor } from '../paging.js'
import { BATCH, MAX_EXAMINED, matches, needsSummaries, type SkuFilter, type SkuListKeys } from './sku-list.js'

/**
 * The SKU list ordered by holdout error, largest first (`sort=error`): only SKUs
 * with an error on the filter's measure (default mase), ties in reverse SKU
 * byte order (the error set's own order). Walks the measure's error set by
 * rank from the cursor and checks the other conditions per batch as the list
 * by SKU does (sku-list.ts), with the same bound on rows examined. The cursor
 * holds the last error and SKU seen; a SKU whose error changes between two
 * pages may be skipped or shown twice.
 * @throws CursorError on a cursor this service did not issue, or one of the list by SKU
 */
export async function findSkusByError(
  redis: RedisClient,
  k: SkuListKeys,
  filter: SkuFilter,
  page: { readonly limit: number; readonly cursor?: string },
): Promise<{ skus: string[]; nextCursor: string | null }> {
  const key = k.summaries.error(filter.errorMeasure ?? 'mase')
  const limit = Math.max(1, Math.floor(page.limit))
  let start = await startRank(redis, key, filter, page.cursor)
  const stored = filter.tag === undefined ? k.skus : k.tag(filter.tag)
  const members = filter.exception === true ? [stored, k.exceptions] : [stored]
  const absent = filter.exception === false ? [k.exceptions] : []
  const out: string[] = []
  let examined = 0
  let last: [string, string] | undefined
  let more = false
  let exhausted = false
  while (out.length < limit && examined < MAX_EXAMINED) {
    const size = Math.min(BATCH, MAX_EXAMINED - examined)
    const flat = await redis.zrevrange(key, start, start + size - 1, 'WITHSCORES')
    const batch: string[] = []
    const scores: string[] = []
    for (let i = 0; i < flat.length; i += 2) {
      // Ordered by error, largest first: below minError nothing further matches.
      if (filter.minError !== undefined && Number(flat[i + 1]) < filter.minError) {
        exhausted = true
        break
      }
      batch.push(flat[i]!)
      scores.push(flat[i + 1]!)
    }
    if (flat.length < size * 2) exhausted = true
    if (batch.length === 0) break
    const inRange = filter.prefix === undefined ? null : batch.map((sku) => sku.startsWith(filter.prefix!))
    const keep = await matches(redis, k, filter, batch, members, absent, needsSummaries(filter))
    for (let i = 0; i < batch.length; i++) {
      if (keep[i] && inRange?.[i] !== false) {
        if (out.length === limit) {
          more = true
          break
        }
        out.push(batch[i]!)
      }
      last = [scores[i]!, batch[i]!]
      examined++
    }
    if (more || exhausted) break
    start += batch.length
  }
  const nextCursor = (more || !exhausted) && last !== undefined ? encodeCursor(`${last[0]}\n${last[1]}`) : null
  return { skus: out, nextCursor }
}

/** The rank (largest error first) the page starts at. */
async function startRank(redis: RedisClient, key: string, filter: SkuFilter, cursor: string | undefined): Promise<number> {
  if (cursor === undefined) {
    // Errors above maxError come first and never match: start after them.
    return filter.maxError === undefined ? 0 : redis.zcount(key, `(${filter.maxError}`, '+inf')
  }
  const after = decodeCursor(cursor)
  const cut = after.indexOf('\n')
  const score = Number(after.slice(0, cut))
  const sku = after.slice(cut + 1)
  if (cut < 1 || !Number.isFinite(score) || sku === '') throw new CursorError()
  const [current, rank] = await Promise.all([redis.zscore(key, sku), redis.zrevrank(key, sku)])
  if (current !== null && rank !== null && Number(current) === score) return rank + 1
  // The SKU moved or left since: start after every SKU with a larger error, and those of equal error ordered before it.
  const above = await redis.zcount(key, `(${score}`, '+inf')
  const ties = await redis.zrangebyscore(key, score, score)
  return above + ties.filter((t) => Buffer.compare(Buffer.from(t), Buffer.from(sku)) > 0).length
}
