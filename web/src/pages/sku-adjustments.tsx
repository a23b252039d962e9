import { useState } from 'preact/hooks'
import { describeError, getJson, request, skuPath, ApiError } from '../api'
import { formatNumber, formatTime } from '../format'
import { useAsync } from '../use-async'
import type { AdjustmentChange, Page, SkuForecast, TrailEntry } from '../types'

/**
 * The SKU page's adjustments: a form that adjusts chosen periods of the current
 * forecast (a value or a percentage, with a reason and the planner's name), the
 * adjustments in force with a way to remove each, and the audit trail.
 * The figures stay estimates to review: the page's caution applies to them too.
 */

const AUTHOR_ITEM = 'almanac.author'

function changeText(c: AdjustmentChange | null | undefined): string {
  if (!c) return 'none'
  if (c.setDemand !== undefined) return `set to ${formatNumber(c.setDemand)}`
  if (c.changePercent !== undefined) return `${c.changePercent > 0 ? '+' : ''}${formatNumber(c.changePercent)}%`
  return 'none'
}

const ACTION_TEXT: Record<TrailEntry['action'], string> = { set: 'set', removed: 'removed', expired: 'expired (period passed)' }

function Trail({ sku, version }: { sku: string; version: number }) {
  const loaded = useAsync((signal) => getJson<Page<TrailEntry>>(skuPath(sku, '/adjustments/trail?limit=50'), signal), [sku, version])
  if (loaded.state === 'loading') return <p class="muted">Loading the audit trail…</p>
  if (loaded.state === 'failed') return <p class="error">Could not load the audit trail: {describeError(loaded.error)}</p>
  const items = loaded.value.items
  if (items.length === 0) return <p class="muted">No adjustment has been made to this SKU.</p>
  return (
    <div class="table-wrap">
      <table class="data" data-testid="adjustment-trail">
        <caption>Audit trail, newest first{loaded.value.nextCursor ? ' (the latest 50 changes)' : ''}</caption>
        <thead>
          <tr>
            <th scope="col">When</th>
            <th scope="col">Who</th>
            <th scope="col">Period</th>
            <th scope="col">What</th>
            <th scope="col">Adjustment, old → new</th>
            <th scope="col" class="num">Final demand, old → new</th>
            <th scope="col">Reason</th>
          </tr>
        </thead>
        <tbody>
          {items.map((e, i) => (
            <tr key={i}>
              <td>{formatTime(e.at)}</td>
              <td>{e.author}</td>
              <th scope="row" class="mono">
                {e.period}
              </th>
              <td>{ACTION_TEXT[e.action]}</td>
              <td>
                {changeText(e.before)} → {changeText(e.after)}
              </td>
              <td class="num">
                {formatNumber(e.finalDemandBefore)} → {formatNumber(e.finalDemandAfter)}
              </td>
              <td>{e.reason}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  )
}

export function SkuAdjustments({ sku, forecast, onChanged }: { sku: string; forecast: SkuForecast; onChanged: () => void }) {
  const [chosen, setChosen] = useState<ReadonlySet<string>>(new Set())
  const [kind, setKind] = useState<'changePercent' | 'setDemand'>('changePercent')
  const [amount, setAmount] = useState('')
  const [reason, setReason] = useState('')
  const [author, setAuthor] = useState(() => sessionStorage.getItem(AUTHOR_ITEM) ?? '')
  const [busy, setBusy] = useState(false)
  const [outcome, setOutcome] = useState<{ ok: boolean; text: string; fields: readonly string[] } | null>(null)
  const [version, setVersion] = useState(0)

  const toggle = (period: string) => {
    const next = new Set(chosen)
    if (next.has(period)) next.delete(period)
    else next.add(period)
    setChosen(next)
  }

  const done = (text: string) => {
    setOutcome({ ok: true, text, fields: [] })
    setVersion((v) => v + 1)
    onChanged()
  }
  const failed = (err: unknown) => {
    const fields = err instanceof ApiError ? (err.problem?.errors ?? []).map((e) => e.path.replace(/\[\d+\]$/, '')) : []
    setOutcome({ ok: false, text: describeError(err), fields })
  }

  const submit = async (event: Event) => {
    event.preventDefault()
    if (busy) return
    const periods = forecast.forecast.map((p) => p.period).filter((p) => chosen.has(p))
    const value = Number(amount)
    const problems = [
      ...(periods.length === 0 ? ['Choose at least one period.'] : []),
      ...(amount.trim() === '' || !Number.isFinite(value) ? ['Enter a number.'] : []),
      ...(reason.trim() === '' ? ['Give a reason.'] : []),
      ...(author.trim() === '' ? ['Give your name.'] : []),
    ]
    if (problems.length > 0) {
      setOutcome({ ok: false, text: problems.join(' '), fields: [] })
      return
    }
    setBusy(true)
    sessionStorage.setItem(AUTHOR_ITEM, author.trim())
    try {
      const body = JSON.stringify({ periods, [kind]: value, reason: reason.trim(), author: author.trim() })
      await request(skuPath(sku, '/adjustments'), { method: 'POST', body, contentType: 'application/json' })
      setChosen(new Set())
      done(`Adjusted ${periods.length} period${periods.length === 1 ? '' : 's'}: ${periods.join(', ')}.`)
    } catch (err) {
      failed(err)
    } finally {
      setBusy(false)
    }
  }

  const remove = async (period: string) => {
    if (author.trim() === '') {
      setOutcome({ ok: false, text: 'Give your name before removing an adjustment.', fields: ['author'] })
      return
    }
    setBusy(true)
    try {
      const query = `?author=${encodeURIComponent(author.trim())}${reason.trim() ? `&reason=${encodeURIComponent(reason.trim())}` : ''}`
      await request(skuPath(sku, `/adjustments/${encodeURIComponent(period)}${query}`), { method: 'DELETE' })
      done(`Removed the adjustment of ${period}.`)
    } catch (err) {
      failed(err)
    } finally {
      setBusy(false)
    }
  }

  const invalid = (field: string) => (outcome && !outcome.ok && outcome.fields.includes(field) ? 'true' : undefined)
  const adjusted = forecast.forecast.filter((p) => p.adjustment)

  return (
    <section aria-labelledby="adjust-heading" data-testid="adjustments">
      <h2 id="adjust-heading">Adjust the forecast</h2>
      <p class="muted">
        For periods you know better than the model (a promotion, a lost customer). The statistical forecast is kept; the adjusted
        figure is what the ERP reads as the final demand. Adjustments end once the period’s actual demand is in the history.
      </p>
      <form onSubmit={(event) => void submit(event)} aria-describedby="adjust-outcome">
        <fieldset class="filters">
          <legend>Periods</legend>
          {forecast.forecast.map((p) => (
            <label key={p.period} class="inline-form">
              <input type="checkbox" checked={chosen.has(p.period)} onChange={() => toggle(p.period)} data-period={p.period} />
              <span class="mono">{p.period}</span>
            </label>
          ))}
        </fieldset>
        <div class="filters">
          <div class="field">
            <label for="adjust-kind">Change</label>
            <select id="adjust-kind" value={kind} onChange={(e) => setKind((e.target as HTMLSelectElement).value as typeof kind)}>
              <option value="changePercent">by a percentage</option>
              <option value="setDemand">to a value</option>
            </select>
          </div>
          <div class="field">
            <label for="adjust-amount">{kind === 'changePercent' ? 'Percent (−15 lowers by 15%)' : 'Demand'}</label>
            <input
              id="adjust-amount"
              inputMode="decimal"
              value={amount}
              aria-invalid={invalid(kind)}
              onInput={(e) => setAmount((e.target as HTMLInputElement).value)}
            />
          </div>
          <div class="field">
            <label for="adjust-reason">Reason</label>
            <input id="adjust-reason" value={reason} maxLength={500} aria-invalid={invalid('reason')} onInput={(e) => setReason((e.target as HTMLInputElement).value)} />
          </div>
          <div class="field">
            <label for="adjust-author">Your name</label>
            <input id="adjust-author" value={author} maxLength={100} aria-invalid={invalid('author')} onInput={(e) => setAuthor((e.target as HTMLInputElement).value)} />
          </div>
        </div>
        <button type="submit" class="primary" disabled={busy}>
          Adjust
        </button>
      </form>
      <p id="adjust-outcome" class={outcome?.ok === false ? 'error' : 'status-line'} role={outcome?.ok === false ? 'alert' : 'status'} data-testid="adjust-outcome">
        {outcome?.text ?? ''}
      </p>
      <h3>Adjustments in force</h3>
      {adjusted.length === 0 ? (
        <p class="muted">None: every period plans with the statistical forecast.</p>
      ) : (
        <ul data-testid="adjustments-in-force">
          {adjusted.map((p) => (
            <li key={p.period}>
              <span class="mono">{p.period}</span>: {formatNumber(p.demand)} → <strong>{formatNumber(p.finalDemand)}</strong> (
              {changeText(p.adjustment)}, {p.adjustment!.author}: {p.adjustment!.reason}){' '}
              <button type="button" class="link-button" disabled={busy} onClick={() => void remove(p.period)}>
                Remove<span class="visually-hidden"> the adjustment of {p.period}</span>
              </button>
            </li>
          ))}
        </ul>
      )}
      <h3>Audit trail</h3>
      <Trail sku={sku} version={version} />
    </section>
  )
}
