import type { Problem } from './types'

/**
 * The API client of the workbench: same origin, the API key (if any) from this
 * browser session only. A 401 signs the page out, so a wrong or revoked key is
 * asked for again instead of failing every request.
 */

const KEY_ITEM = 'almanac.apiKey'

export function storedKey(): string | null {
  return sessionStorage.getItem(KEY_ITEM)
}

export function storeKey(key: string): void {
  sessionStorage.setItem(KEY_ITEM, key)
}

export function forgetKey(): void {
  sessionStorage.removeItem(KEY_ITEM)
}

const signedOutListeners = new Set<() => void>()
export function onSignedOut(listener: () => void): () => void {
  signedOutListeners.add(listener)
  return () => signedOutListeners.delete(listener)
}

export class ApiError extends Error {
  constructor(
    readonly status: number,
    readonly problem: Problem | null,
  ) {
    super(problem?.detail ?? problem?.title ?? `The server answered ${status}`)
  }
}

export interface RequestOptions {
  readonly method?: string
  readonly body?: BodyInit
  readonly contentType?: string
  /** ETag of the copy held; a 304 answer then resolves to `{ notModified: true }`. */
  readonly etag?: string | null
  readonly signal?: AbortSignal
  /** Key to try instead of the stored one (the sign-in form checks a typed key). */
  readonly key?: string
}

export type Answer<T> = { readonly notModified: true } | { readonly notModified: false; readonly body: T; readonly etag: string | null }

async function problemOf(response: Response): Promise<Problem | null> {
  try {
    return (await response.json()) as Problem
  } catch {
    return null
  }
}

/** One call; non-2xx answers throw ApiError carrying the problem details. */
export async function request<T>(path: string, options: RequestOptions = {}): Promise<Answer<T>> {
  const headers: Record<string, string> = { accept: 'application/json' }
  const key = options.key ?? storedKey()
  if (key) headers.authorization = `Bearer ${key}`
  if (options.contentType) headers['content-type'] = options.contentType
  if (options.etag) headers['if-none-match'] = options.etag
  const response = await fetch(path, {
    method: options.method ?? 'GET',
    headers,
    body: options.body,
    signal: options.signal,
    // The page keeps its own copy and ETag; the browser cache must not answer for the server.
    cache: 'no-store',
  })
  if (response.status === 304) return { notModified: true }
  if (!response.ok) {
    const problem = await problemOf(response)
    if (response.status === 401 && options.key === undefined) {
      forgetKey()
      for (const l of signedOutListeners) l()
    }
    throw new ApiError(response.status, problem)
  }
  // 204 No Content (a DELETE) has no body to read.
  const body = response.status === 204 ? (null as T) : ((await response.json()) as T)
  return { notModified: false, body, etag: response.headers.get('etag') }
}

/** GET and return the body. */
export async function getJson<T>(path: string, signal?: AbortSignal): Promise<T> {
  const answer = await request<T>(path, { signal })
  if (answer.notModified) throw new Error(`unexpected 304 for ${path}`)
  return answer.body
}

/** `/v1/skus/GRD%2F1` style paths: every segment value is encoded. */
export function skuPath(sku: string, rest = ''): string {
  return `/v1/skus/${encodeURIComponent(sku)}${rest}`
}

export function describeError(err: unknown): string {
  if (err instanceof ApiError) {
    const fields = err.problem?.errors?.map((e) => `${e.path}: ${e.message}`).join('; ')
    return fields ? `${err.message} (${fields})` : err.message
  }
  if (err instanceof Error) return err.message
  return String(err)
}
