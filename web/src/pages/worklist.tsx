import { useState } from 'preact/hooks'
import { describeError, getJson, request } from '../api'
import { formatNumber, formatTime } from '../format'
import { Icon } from '../icons'
import { Link, hrefs, navigate } from '../router'
import { useAsync } from '../use-async'
import { WORKLIST_KINDS, type Page, type WorklistItem, type WorklistKind } from '../types'

const PAGE_SIZE = 50

/** Our labels for the kinds; always shown as text, never as a colour alone. */
export const KIND_LABELS: Readonly<Record<WorklistKind, string>> = {
  biased: 'Biased forecast',
  'large-change': 'Large change',
  failed: 'Failed fit',
  'short-history': 'Short history',
}

const isKind = (k: string): k is WorklistKind => (WORKLIST_KINDS as readonly string[]).includes(k)

function detailOf(item: WorklistItem, kind: WorklistKind): string {
  switch (kind) {
    case 'biased': {
      const ts = item.trackingSignal
      return ts ? `tracking signal ${ts.trackingSignal?.toFixed(1) ?? '–'} over ${ts.scoredPeriods} scored period${ts.scoredPeriods === 1 ? '' : 's'}` : ''
    }
    case 'large-change': {
      const c = item.change
      if (!c) return ''
      const moved = c.percent === null ? 'up from zero' : `${c.percent > 0 ? '+' : ''}${c.percent.toFixed(0)} %`
      return `${moved} against the previous forecast over ${c.commonPeriods} period${c.commonPeriods === 1 ? '' : 's'} in common`
    }
    case 'failed':
      return item.failure ? `${item.failure.code}: ${item.failure.message}` : ''
    case 'short-history':
      return item.historyLength === null ? '' : `${item.historyLength} period${item.historyLength === 1 ? '' : 's'} of history`
  }
}

/** One row's review controls: a note, Acknowledge and Snooze. */
function ReviewControls({ item, onDone }: { item: WorklistItem; onDone: (message: string) => void }) {
  const [note, setNote] = useState('')
  const [busy, setBusy] = useState(false)
  const [problem, setProblem] = useState('')
  const id = `note-${item.sku.replace(/[^A-Za-z0-9_-]/g, '_')}`
  const send = async (verb: 'acknowledge' | 'snooze') => {
    setBusy(true)
    setProblem('')
    try {
      await request(`/v1/worklist/${encodeURIComponent(item.sku)}/${verb}`, {
        method: 'POST',
        body: JSON.stringify({ note }),
        contentType: 'application/json',
      })
      setNote('')
      onDone(`${item.sku} ${verb === 'acknowledge' ? 'acknowledged' : 'snoozed until its next run'}.`)
    } catch (err) {
      setProblem(describeError(err))
    } finally {
      setBusy(false)
    }
  }
  return (
    <div class="review-controls">
      <label for={id} class="visually-hidden">
        Note for {item.sku}
      </label>
      <input id={id} value={note} placeholder="Note" maxLength={2000} onInput={(e) => setNote((e.target as HTMLInputElement).value)} />
      <button type="button" disabled={busy} onClick={() => void send('acknowledge')} aria-label={`Acknowledge ${item.sku}`}>
        <Icon name="check" /> Acknowledge
      </button>
      <button type="button" disabled={busy} onClick={() => void send('snooze')} aria-label={`Snooze ${item.sku}`}>
        <Icon name="clock" /> Snooze
      </button>
      {problem ? (
        <span class="error" role="alert">
          {problem}
        </span>
      ) : null}
    </div>
  )
}

/**
 * /app/worklist?kind=: GET /v1/worklist, the SKUs that need a look, with
 * acknowledge (with a note) and snooze per SKU. The kind filter lives in the URL.
 */
export function Worklist({ kind }: { kind: string }) {
  const filter = isKind(kind) ? kind : ''
  const [showSnoozed, setShowSnoozed] = useState(false)
  const [cursors, setCursors] = useState<{ key: string; list: (string | undefined)[] }>({ key: '', list: [undefined] })
  const [reloads, setReloads] = useState(0)
  const [message, setMessage] = useState('')
  const key = `${filter}|${showSnoozed}`
  const list = cursors.key === key ? cursors.list : [undefined]
  const cursor = list[list.length - 1]

  const page = useAsync(
    async (signal) => {
      const q = new URLSearchParams({ limit: String(PAGE_SIZE) })
      if (filter) q.set('kind', filter)
      if (showSnoozed) q.set('includeSnoozed', 'true')
      if (cursor) q.set('cursor', cursor)
      return getJson<Page<WorklistItem>>(`/v1/worklist?${q}`, signal)
    },
    [filter, showSnoozed, cursor, reloads],
  )
  const items = page.state === 'done' ? page.value.items : []
  const next = page.state === 'done' ? page.value.nextCursor : null

  return (
    <>
      <h1 tabIndex={-1}>Worklist</h1>
      <p class="subtitle">
        SKUs whose forecasts need a look before they drive orders. Each entry is a prompt to review, not a verdict: the
        figures are statistical estimates.
      </p>
      <form class="filters" aria-label="Filter the worklist" onSubmit={(e) => e.preventDefault()}>
        <div class="field">
          <label for="worklist-kind">Kind</label>
          <select id="worklist-kind" value={filter} onChange={(e) => navigate(hrefs.worklist((e.target as HTMLSelectElement).value), { replace: true })}>
            <option value="">Every kind</option>
            {WORKLIST_KINDS.map((k) => (
              <option key={k} value={k}>
                {KIND_LABELS[k]}
              </option>
            ))}
          </select>
        </div>
        <div class="field checkbox-field">
          <label>
            <input type="checkbox" checked={showSnoozed} onChange={(e) => setShowSnoozed((e.target as HTMLInputElement).checked)} /> Show snoozed
          </label>
        </div>
      </form>

      <p class="status-line" role="status" data-testid="worklist-status" data-state={page.state}>
        {message ? `${message} ` : ''}
        {page.state === 'loading' ? 'Loading…' : null}
        {page.state === 'done'
          ? `Page ${list.length}: ${formatNumber(items.length)} SKU${items.length === 1 ? '' : 's'}${filter ? ` of kind “${KIND_LABELS[filter]}”` : ''}${next ? ', more on the next page' : ''}.`
          : null}
      </p>
      {page.state === 'failed' ? <p class="error" role="alert">Could not read the worklist: {describeError(page.error)}</p> : null}

      {items.length > 0 ? (
        <div class="table-wrap">
          <table class="data" data-testid="worklist-table">
            <caption class="visually-hidden">Worklist, page {list.length}</caption>
            <thead>
              <tr>
                <th scope="col">SKU</th>
                <th scope="col">Why</th>
                <th scope="col">Review</th>
                <th scope="col">Act</th>
              </tr>
            </thead>
            <tbody>
              {items.map((item) => (
                <tr key={item.sku} data-sku={item.sku}>
                  <th scope="row">
                    <Link href={hrefs.sku(item.sku)} class="mono nowrap">
                      {item.sku}
                    </Link>
                  </th>
                  <td>
                    <ul class="kinds">
                      {item.kinds.map((k) => (
                        <li key={k} data-kind={k}>
                          <span class={`kind kind-${k}`}>{KIND_LABELS[k]}</span> <span class="small">{detailOf(item, k)}</span>
                        </li>
                      ))}
                    </ul>
                  </td>
                  <td data-testid="review">
                    {item.review ? (
                      <>
                        <strong>{item.review.state === 'acknowledged' ? 'Acknowledged' : 'Snoozed'}</strong> {formatTime(item.review.at)}
                        {item.review.note ? <div class="small">“{item.review.note}”</div> : null}
                      </>
                    ) : (
                      <span class="muted">Not reviewed</span>
                    )}
                  </td>
                  <td>
                    <ReviewControls
                      item={item}
                      onDone={(m) => {
                        setMessage(m)
                        setReloads((n) => n + 1)
                      }}
                    />
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      ) : null}
      {page.state === 'done' && items.length === 0 ? (
        <p>
          Nothing on the worklist{filter ? ' of this kind' : ''}. {filter ? <Link href={hrefs.worklist()}>Show every kind</Link> : null}
        </p>
      ) : null}

      <nav class="pager" aria-label="Pages">
        <button type="button" disabled={list.length <= 1} onClick={() => setCursors({ key, list: list.slice(0, -1) })}>
          Previous page
        </button>
        <button type="button" disabled={!next} onClick={() => next && setCursors({ key, list: [...list, next] })}>
          Next page
        </button>
      </nav>
    </>
  )
}
