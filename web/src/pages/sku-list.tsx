import { useEffect, useRef, useState } from 'preact/hooks'
import { describeError, getJson } from '../api'
import { formatNumber, formatPrecise, formatTime, modelLabel } from '../format'
import { Icon } from '../icons'
import { Link, hrefs, navigate } from '../router'
import { measureLabel, skuQueryKey, skuQueryParams, type SkuQuery } from '../sku-filters'
import { SkuFilterForm } from './sku-filter-form'
import { useAsync } from '../use-async'
import type { Page, SkuSummary } from '../types'

const TYPING_PAUSE_MS = 250

/**
 * GET /v1/skus, paged on the server: SKU prefix and tag, and each SKU's newest
 * published outcome (model, warning, failed, holdout error) or the exception
 * list. The filters live in the URL (same names as the API's query) so a
 * filtered list can be linked. A filtered page may hold fewer rows than asked
 * for: the server examines a bounded number of SKUs per request.
 */
export function SkuList({ query }: { query: SkuQuery }) {
  const [draft, setDraft] = useState<SkuQuery>(query)
  const [limit, setLimit] = useState<number>(50)
  // Cursors of the pages before this one, to go back; the current page's cursor last.
  // They belong to one filter: a new filter starts again at the first page.
  const filterKey = `${skuQueryKey(query)}|${limit}`
  const [paging, setPaging] = useState<{ key: string; cursors: (string | undefined)[] }>({ key: filterKey, cursors: [undefined] })
  const cursors = paging.key === filterKey ? paging.cursors : [undefined]
  const setCursors = (next: (string | undefined)[]) => setPaging({ key: filterKey, cursors: next })
  const cursor = cursors[cursors.length - 1]
  const typing = useRef<ReturnType<typeof setTimeout>>()

  useEffect(() => setDraft(query), [skuQueryKey(query)])

  const page = useAsync(
    async (signal) => {
      const q = skuQueryParams(query)
      q.set('limit', String(limit))
      if (cursor) q.set('cursor', cursor)
      const started = performance.now()
      const body = await getJson<Page<SkuSummary>>(`/v1/skus?${q}`, signal)
      return { body, ms: performance.now() - started, query: `${query.prefix}|${query.tag}`, filters: skuQueryKey(query) }
    },
    [skuQueryKey(query), limit, cursor],
  )

  useEffect(() => {
    if (page.state === 'done') performance.mark('sku-list-shown')
  }, [page])

  const apply = (next: SkuQuery) => {
    clearTimeout(typing.current)
    if (skuQueryKey(next) === skuQueryKey(query)) return
    // bench:workbench times the filter from this mark to 'sku-list-shown'.
    performance.mark('sku-list-filter')
    navigate(hrefs.skus(next.prefix.trim(), next.tag.trim(), next), { replace: true })
  }
  /** Typed fields wait for a pause; choices apply at once. */
  const onType = (next: SkuQuery) => {
    setDraft(next)
    clearTimeout(typing.current)
    typing.current = setTimeout(() => apply(next), TYPING_PAUSE_MS)
  }
  const onChoose = (next: SkuQuery) => {
    setDraft(next)
    apply(next)
  }

  const items = page.state === 'done' ? page.value.body.items : []
  const next = page.state === 'done' ? page.value.body.nextCursor : null
  const pageNumber = cursors.length
  const filtered = skuQueryKey(query) !== ''
  const outcomeFiltered = query.model || query.warning || query.minError || query.failed || query.exception || query.sort
  return (
    <>
      <h1 tabIndex={-1}>SKUs</h1>
      <SkuFilterForm
        draft={draft}
        filtered={filtered}
        limit={limit}
        onLimit={setLimit}
        onSubmit={() => apply(draft)}
        onType={onType}
        onChoose={onChoose}
      />

      <p
        class="status-line"
        role="status"
        data-testid="sku-list-status"
        data-state={page.state}
        data-query={page.state === 'done' ? page.value.query : undefined}
        data-filters={page.state === 'done' ? page.value.filters : undefined}
      >
        {page.state === 'loading' ? 'Loading…' : null}
        {page.state === 'done'
          ? `Page ${pageNumber}: ${formatNumber(items.length)} SKU${items.length === 1 ? '' : 's'}${describeQuery(query)}${next ? ', more on the next page' : ''}.`
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
                <th scope="col">Model</th>
                <th scope="col" class="num">Holdout error</th>
                <th scope="col">Warnings</th>
                <th scope="col">Frequency</th>
                <th scope="col" class="num">Periods</th>
                <th scope="col">To</th>
                <th scope="col">Tags</th>
                <th scope="col">Updated</th>
              </tr>
            </thead>
            <tbody>
              {items.map((s) => (
                <tr key={s.sku} data-model={s.published?.model ?? undefined}>
                  <th scope="row">
                    <Link href={hrefs.sku(s.sku)} class="mono">
                      {s.sku}
                    </Link>
                  </th>
                  <td>
                    {s.published === undefined ? (
                      <span class="muted">not published</span>
                    ) : s.published.failed ? (
                      <span>
                        <Icon name="alert" /> failed
                      </span>
                    ) : (
                      modelLabel(s.published.model ?? '–')
                    )}
                  </td>
                  <td class="num">
                    {s.published?.error ? `${formatPrecise(s.published.error.value)} ${measureLabel(s.published.error.measure)}` : '–'}
                  </td>
                  <td>
                    {s.published?.warnings.length ? (
                      <span>
                        <Icon name="alert" /> {s.published.warnings.join(', ')}
                      </span>
                    ) : null}
                  </td>
                  <td>{s.frequency}</td>
                  <td class="num">{formatNumber(s.periodCount)}</td>
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
          {next
            ? 'No matching SKUs on this stretch of the list; the next page looks further.'
            : filtered
              ? `No SKUs match.${outcomeFiltered ? ' Model, warning, error and failed filters need a published run.' : ' Try a shorter prefix or another tag.'}`
              : null}
          {!filtered ? <Link href={hrefs.upload()}>Upload histories</Link> : null}
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

/** The filters in words, for the status line. */
function describeQuery(q: SkuQuery): string {
  const parts: string[] = []
  if (q.prefix) parts.push(` starting with “${q.prefix}”`)
  if (q.tag) parts.push(` tagged ${q.tag}`)
  if (q.model) parts.push(` forecast with ${modelLabel(q.model)}`)
  if (q.warning) parts.push(` warned ${q.warning}`)
  if (q.minError) parts.push(` with ${measureLabel(q.errorMeasure)} at least ${q.minError}`)
  if (q.failed) parts.push(' whose forecast failed')
  if (q.exception) parts.push(' on the exception list')
  const text = parts.join(',')
  return q.sort === 'error' ? `${text}, largest ${measureLabel(q.errorMeasure)} first` : text
}
