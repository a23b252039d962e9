import type { ComponentChildren, JSX } from 'preact'
import { useEffect, useState } from 'preact/hooks'
import { parseSkuQuery, skuQueryParams, type SkuQuery } from './sku-filters'

/**
 * A small history-API router: every page has its own URL under /app/, so links
 * can be bookmarked and shared, and the server answers index.html for them.
 */

export const BASE = '/app'

export type Route =
  | { readonly page: 'overview' }
  | { readonly page: 'run'; readonly runId: string }
  | { readonly page: 'skus'; readonly query: SkuQuery }
  | { readonly page: 'sku'; readonly sku: string }
  | { readonly page: 'upload' }
  | { readonly page: 'worklist'; readonly kind: string }
  | { readonly page: 'not-found'; readonly path: string }

export function parseRoute(pathname: string, search: string): Route {
  const path = pathname.startsWith(BASE) ? pathname.slice(BASE.length) : pathname
  const query = new URLSearchParams(search)
  if (path === '' || path === '/') return { page: 'overview' }
  if (path === '/skus' || path === '/skus/') return { page: 'skus', query: parseSkuQuery(query) }
  if (path === '/upload') return { page: 'upload' }
  if (path === '/worklist' || path === '/worklist/') return { page: 'worklist', kind: query.get('kind') ?? '' }
  const sku = /^\/skus\/(.+)$/.exec(path)
  if (sku) return { page: 'sku', sku: decodeURIComponent(sku[1]!) }
  const run = /^\/runs\/([A-Za-z0-9_-]+)$/.exec(path)
  if (run) return { page: 'run', runId: run[1]! }
  return { page: 'not-found', path }
}

export const hrefs = {
  overview: () => `${BASE}/`,
  run: (runId: string) => `${BASE}/runs/${encodeURIComponent(runId)}`,
  skus: (prefix = '', tag = '', more: Partial<SkuQuery> = {}) => {
    const s = skuQueryParams({ ...more, prefix, tag }).toString()
    return `${BASE}/skus${s ? `?${s}` : ''}`
  },
  sku: (sku: string) => `${BASE}/skus/${encodeURIComponent(sku)}`,
  upload: () => `${BASE}/upload`,
  worklist: (kind = '') => `${BASE}/worklist${kind ? `?kind=${encodeURIComponent(kind)}` : ''}`,
}

const listeners = new Set<() => void>()

export function navigate(href: string, options: { replace?: boolean } = {}): void {
  if (options.replace) history.replaceState(null, '', href)
  else history.pushState(null, '', href)
  for (const l of listeners) l()
}

window.addEventListener('popstate', () => {
  for (const l of listeners) l()
})

export function useRoute(): Route {
  const [route, setRoute] = useState(() => parseRoute(location.pathname, location.search))
  useEffect(() => {
    const update = () => setRoute(parseRoute(location.pathname, location.search))
    listeners.add(update)
    return () => void listeners.delete(update)
  }, [])
  return route
}

type LinkProps = Omit<JSX.HTMLAttributes<HTMLAnchorElement>, 'href'> & { href: string; children: ComponentChildren }

/** An ordinary link (open in a new tab works) that routes in the page on a plain click. */
export function Link({ href, children, ...rest }: LinkProps) {
  const onClick = (e: MouseEvent) => {
    if (e.defaultPrevented || e.button !== 0 || e.metaKey || e.ctrlKey || e.shiftKey || e.altKey) return
    e.preventDefault()
    navigate(href)
  }
  return (
    <a href={href} onClick={onClick} {...rest}>
      {children}
    </a>
  )
}
