import { useEffect, useRef, useState } from 'preact/hooks'
import { describeError, getJson } from '../api'
import { formatNumber, formatTime } from '../format'
import { Link, hrefs, navigate } from '../router'
import { useAsync } from '../use-async'
import type { Page, SkuSummary } from '../types'

const PAGE_SIZES = [25, 50, 100, 200] as const
const TYPING_PAUSE_MS = 250

/**
 * GET /v1/skus, paged on the server: SKU prefix and tag filters, cursor paging.
 * The filters live in the URL (?prefix=&tag=) so a filtered list can be linked.
 */
export function SkuList({ prefix, tag }: { prefix: string; tag: string }) {
  const [prefixText, setPrefixText] = useState(prefix)
  const [tagText, setTagText] = useState(tag)
  const [limit, setLimit] = useState<number>(50)
  // Cursors of the pages before this one, to go back; the current page's cursor last.
  // They belong to one filter: a new filter starts again at the first page.
  const filterKey = `${prefix}|${tag}|${limit}`
  const [paging, setPaging] = useState<{ key: string; cursors: (string | undefined)[] }>({ key: filterKey, cursors: [undefined] })
  const cursors = paging.key === filterKey ? paging.cursors : [undefined]
  const setCursors = (next: (string | undefined)[]) => setPaging({ key: filterKey, cursors: next })
  const cursor = cursors[cursors.length - 1]
  const typing = useRef<ReturnType<typeof setTimeout>>()

  useEffect(() => {
    setPrefixText(prefix)
    setTagText(tag)
  }, [prefix, tag])

  const page = useAsync(async (signal) => {
    const q = new URLSearchParams({ limit: String(limit) })
    if (prefix) q.set('prefix', prefix)
    if (tag) q.set('tag', tag)
    if (cursor) q.set('cursor', cursor)
    const started = performance.now()
    const body = await getJson<Page<SkuSummary>>(`/v1/skus?${q}`, signal)
    return { body, ms: performance.now() - started, query: `${prefix}|${tag}` }
  }, [prefix, tag, limit, cursor])

  useEffect(() => {
    if (page.state === 'done') performance.mark('sku-list-shown')
  }, [page])

  const apply = (p: string, t: string) => {
    clearTimeout(typing.current)
    if (p === prefix && t === tag) return
    // bench:workbench times the filter from this mark to 'sku-list-shown'.
    performance.mark('sku-list-filter')
    navigate(hrefs.skus(p.trim(), t.trim()), { replace: true })
  }
  const onType = (p: string, t: string) => {
    setPrefixText(p)
    setTagText(t)
    clearTimeout(typing.current)
    typing.current = setTimeout(() => apply(p, t), TYPING_PAUSE_MS)
  }

  const items = page.state === 'done' ? page.value.body.items : []
  const next = page.state === 'done' ? page.value.body.nextCursor : null
  const pageNumber = cursors.length
  return (
    <>
      <h1 tabIndex={-1}>SKUs</h1>
      <form
        class="filters"
        role="search"
        aria-label="Find SKUs"
        onSubmit={(e) => {
          e.preventDefault()
          apply(prefixText, tagText)
        }}
      >
        <div class="field">
          <label for="sku-prefix">SKU starts with</label>
          <input
            id="sku-prefix"
            type="search"
            value={prefixText}
            autocomplete="off"
            spellcheck={false}
            onInput={(e) => onType((e.target as HTMLInputElement).value, tagText)}
          />
        </div>
        <div class="field">
          <label for="sku-tag">Tag</label>
          <input
            id="sku-tag"
            type="search"
            value={tagText}
            placeholder="category:garden"
            autocomplete="off"
            spellcheck={false}
            onInput={(e) => onType(prefixText, (e.target as HTMLInputElement).value)}
          />
        </div>
        <div class="field">
          <label for="sku-limit">Per page</label>
          <select
            id="sku-limit"
            value={String(limit)}
            onChange={(e) => setLimit(Number((e.target as HTMLSelectElement).value))}
          >
            {PAGE_SIZES.map((n) => (
              <option key={n} value={String(n)}>
                {n}
              </option>
            ))}
          </select>
        </div>
        <button type="submit">Search</button>
      </form>

      <p class="status-line" role="status" data-testid="sku-list-status" data-state={page.state} data-query={page.state === 'done' ? page.value.query : undefined}>
        {page.state === 'loading' ? 'Loading…' : null}
        {page.state === 'done'
          ? `Page ${pageNumber}: ${formatNumber(items.length)} SKU${items.length === 1 ? '' : 's'}${prefix ? ` starting with “${prefix}”` : ''}${tag ? ` tagged ${tag}` : ''}${next ? ', more on the next page' : ''}.`
          : null}
      </p>
      {page.state === 'failed' ? <p class="error" role="alert">Could not list SKUs: {describeError(page.error)}</p> : null}

      {items.length > 0 ? (
        <div class="table-wrap">
          <table class="data" data-testid="sku-table">
            <caption class="visually-hidden">SKUs with a stored history, page {pageNumber}</caption>
            <thead>
              <tr>
                <th scope="col">SKU</th>
                <th scope="col">Frequency</th>
                <th scope="col" class="num">Periods</th>
                <th scope="col">From</th>
                <th scope="col">To</th>
                <th scope="col">Tags</th>
                <th scope="col">Updated</th>
              </tr>
            </thead>
            <tbody>
              {items.map((s) => (
                <tr key={s.sku}>
                  <th scope="row">
                    <Link href={hrefs.sku(s.sku)} class="mono">
                      {s.sku}
                    </Link>
                  </th>
                  <td>{s.frequency}</td>
                  <td class="num">{formatNumber(s.periodCount)}</td>
                  <td class="mono">{s.firstPeriod}</td>
                  <td class="mono">{s.lastPeriod}</td>
                  <td>
                    {s.tags.map((t) => (
                      <Link key={t} href={hrefs.skus('', t)} class="tag">
                        {t}
                      </Link>
                    ))}
                  </td>
                  <td>{formatTime(s.updatedAt)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      ) : null}
      {page.state === 'done' && items.length === 0 ? (
        <p>
          No SKUs match. {prefix || tag ? 'Try a shorter prefix or another tag.' : <Link href={hrefs.upload()}>Upload histories</Link>}
        </p>
      ) : null}

      <nav class="pager" aria-label="Pages">
        <button type="button" disabled={cursors.length <= 1} onClick={() => setCursors(cursors.slice(0, -1))}>
          Previous page
        </button>
        <button type="button" disabled={!next} onClick={() => next && setCursors([...cursors, next])}>
          Next page
        </button>
      </nav>
    </>
  )
}
