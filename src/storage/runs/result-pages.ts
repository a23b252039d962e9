import { decodeCursor, encodeCursor } from '../paging.js'
import { servedItemParts, type ItemView } from '../items/item-codec.js'
import { isValidRunId, isValidTenant, runKeys } from '../keys.js'
import type { RedisClient } from '../redis.js'

export interface PageRequest {
  readonly limit: number
  readonly cursor?: string
  readonly sku?: string
  /** Leave out each item's candidates (`?view=compact`). */
  readonly view?: ItemView
}

/** One page of a run's stored items, ordered by SKU (byte order). */
export interface StoredPage {
  /** SKU and stored bytes of each item on the page. */
  readonly items: readonly (readonly [string, Buffer])[]
  readonly nextCursor: string | null
}

/**
 * Reads one page of a run's stored items (the layout of run-store.ts), or null
 * when the run does not exist.
 * @throws CursorError on a cursor this service did not issue.
 */
export async function readStoredPage(redis: RedisClient, prefix: string, tenant: string, runId: string, page: PageRequest): Promise<StoredPage | null> {
  if (!isValidTenant(tenant) || !isValidRunId(runId)) return null
  const k = runKeys(prefix, tenant, runId)
  if (!(await redis.exists(k.run))) return null
  if (page.sku !== undefined) {
    const stored = await redis.hgetBuffer(k.items, page.sku)
    return { items: stored === null ? [] : [[page.sku, stored]], nextCursor: null }
  }
  let from = '-'
  if (page.cursor !== undefined) {
    from = `(${decodeCursor(page.cursor)}`
  }
  const limit = Math.max(1, Math.floor(page.limit))
  const skus = await redis.zrangebylex(k.skus, from, '+', 'LIMIT', 0, limit + 1)
  const pageSkus = skus.slice(0, limit)
  const stored = pageSkus.length > 0 ? await redis.hmgetBuffer(k.items, ...pageSkus) : []
  const items: [string, Buffer][] = []
  pageSkus.forEach((sku, i) => {
    const value = stored[i]
    if (value != null) items.push([sku, value])
  })
  const last = pageSkus[pageSkus.length - 1]
  return { items, nextCursor: skus.length > limit && last !== undefined ? encodeCursor(last) : null }
}

/**
 * The JSON body of a results page as UTF-8 bytes: the same text as
 * JSON.stringify({ items, nextCursor }) of the decoded items, built from each
 * item's stored served JSON without parsing it (item-codec.ts).
 */
export function storedPageJson(page: StoredPage, view: ItemView = 'full'): Buffer {
  const parts: Buffer[] = [Buffer.from('{"items":[')]
  page.items.forEach(([sku, stored], i) => {
    if (i > 0) parts.push(COMMA)
    parts.push(...servedItemParts(sku, stored, view))
  })
  parts.push(Buffer.from(`],"nextCursor":${JSON.stringify(page.nextCursor)}}`))
  return Buffer.concat(parts)
}

const COMMA = Buffer.from(',')

/** readStoredPage then storedPageJson: null when the run does not exist. */
export async function resultsPageJson(redis: RedisClient, prefix: string, tenant: string, runId: string, page: PageRequest): Promise<Buffer | null> {
  const stored = await readStoredPage(redis, prefix, tenant, runId, page)
  return stored === null ? null : storedPageJson(stored, page.view)
}
