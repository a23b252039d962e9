import { createHash } from 'node:crypto'

/**
 * One way to page every list: `limit` items after an opaque `cursor`, answered
 * as `{ items, nextCursor }` (`nextCursor` null on the last page). A cursor is
 * the key of the last item of the previous page (a SKU, or an id) in base64url,
 * with a short check so that a cursor this service did not issue is refused
 * (CursorError, a 400 naming `cursor`) instead of silently starting somewhere.
 */
export class CursorError extends Error {
  override readonly name = 'CursorError'
  readonly field = 'cursor'
  constructor() {
    super('cursor is not one this service issued')
  }
}

export interface Page<T> {
  readonly items: T[]
  readonly nextCursor: string | null
}

const check = (key64: string) => createHash('sha256').update(`almanac-cursor\n${key64}`).digest('base64url').slice(0, 8)

export function encodeCursor(key: string): string {
  const key64 = Buffer.from(key, 'utf8').toString('base64url')
  return `${key64}.${check(key64)}`
}

/** The key a cursor stands for. @throws CursorError on a cursor this service did not issue. */
export function decodeCursor(cursor: string): string {
  const dot = cursor.indexOf('.')
  const key64 = cursor.slice(0, dot)
  if (dot < 1 || !/^[A-Za-z0-9_-]+$/.test(key64) || cursor.slice(dot + 1) !== check(key64)) throw new CursorError()
  const key = Buffer.from(key64, 'base64url').toString('utf8')
  if (key.length === 0 || Buffer.from(key, 'utf8').toString('base64url') !== key64) throw new CursorError()
  return key
}

/**
 * A page of an in-memory list already in its order: the items after the one whose
 * key the cursor names. For the short lists of a tenant (callbacks, schedules,
 * deliveries); long lists page in Redis by key (ZRANGEBYLEX).
 * @throws CursorError when the cursor is malformed or names no item of the list
 */
export function pageOf<T>(sorted: readonly T[], keyOf: (item: T) => string, limit: number, cursor: string | undefined): Page<T> {
  let from = 0
  if (cursor !== undefined) {
    const after = decodeCursor(cursor)
    const at = sorted.findIndex((item) => keyOf(item) === after)
    if (at < 0) throw new CursorError()
    from = at + 1
  }
  const n = Math.max(1, Math.floor(limit))
  const items = sorted.slice(from, from + n)
  const last = items[items.length - 1]
  return { items, nextCursor: from + n < sorted.length && last !== undefined ? encodeCursor(keyOf(last)) : null }
}
