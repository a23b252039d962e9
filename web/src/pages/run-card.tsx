import { Icon, type IconName } from '../icons'
import { formatNumber, formatTime, modelLabel } from '../format'
import { describeError } from '../api'
import { Link, hrefs } from '../router'
import { useRunPoll } from '../run-poll'
import type { Run, RunStatus } from '../types'

const STATUS: Record<RunStatus, { icon: IconName; label: string }> = {
  queued: { icon: 'clock', label: 'Queued' },
  running: { icon: 'spinner', label: 'Running' },
  succeeded: { icon: 'check', label: 'Finished' },
  failed: { icon: 'cross', label: 'Failed' },
  cancelled: { icon: 'cross', label: 'Cancelled' },
}

export function StatusBadge({ status }: { status: RunStatus }) {
  const s = STATUS[status]
  return (
    <span class={`badge badge-${status}`}>
      <Icon name={s.icon} class={status === 'running' ? 'spin' : ''} /> {s.label}
    </span>
  )
}

/** SKUs per chosen model, as labelled bars with counts and shares. */
export function ModelMix({ run }: { run: Run }) {
  const counts = Object.entries(run.summary?.modelCounts ?? {}).filter(([, n]) => n > 0)
  if (counts.length === 0) return <p class="muted">No model mix yet: it is known when the run has finished.</p>
  counts.sort((a, b) => b[1] - a[1] || a[0].localeCompare(b[0]))
  const total = counts.reduce((s, [, n]) => s + n, 0)
  const max = counts[0]![1]
  return (
    <table class="model-mix" data-testid="model-mix">
      <caption>Chosen model per SKU ({formatNumber(total)} SKUs forecast)</caption>
      <thead>
        <tr>
          <th scope="col">Model</th>
          <th scope="col" class="num">SKUs</th>
          <th scope="col" class="num">Share</th>
          <th scope="col">
            <span class="visually-hidden">Bar</span>
          </th>
        </tr>
      </thead>
      <tbody>
        {counts.map(([model, n]) => (
          <tr key={model}>
            <th scope="row">{modelLabel(model)}</th>
            <td class="num">{formatNumber(n)}</td>
            <td class="num">{Math.round((100 * n) / total)}%</td>
            <td class="bar-cell">
              <span class="bar" style={{ width: `${Math.max(2, (100 * n) / max)}%` }} />
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  )
}

/** A run followed live: status, progress, failed items, model mix. */
export function RunCard({ runId, title, onRemove }: { runId: string; title: string; onRemove?: () => void }) {
  const { run, error } = useRunPoll(runId)
  return (
    <section class="card run-card" aria-labelledby={`run-${runId}`} data-testid="run-card" data-run-id={runId} data-status={run?.status}>
      <header class="card-head">
        <h3 id={`run-${runId}`}>
          {title} <Link href={hrefs.run(runId)} class="mono small">{runId}</Link>
        </h3>
        {run ? <StatusBadge status={run.status} /> : null}
        {onRemove ? (
          <button type="button" class="link-button" onClick={onRemove}>
            Stop following<span class="visually-hidden"> run {runId}</span>
          </button>
        ) : null}
      </header>
      {error ? <p class="error" role="alert">Could not read the run: {describeError(error)}</p> : null}
      {run === null && !error ? <p class="muted">Loading the run…</p> : null}
      {run ? <RunFigures run={run} /> : null}
    </section>
  )
}

function RunFigures({ run }: { run: Run }) {
  const { total, done, failed } = run.progress
  return (
    <>
      <div class="progress-row">
        <label for={`progress-${run.id}`}>Progress</label>
        <progress id={`progress-${run.id}`} max={Math.max(total, 1)} value={done} />
        <span class="progress-text" data-testid="run-progress">
          {formatNumber(done)} of {formatNumber(total)} SKUs done
        </span>
      </div>
      <dl class="figures">
        <div>
          <dt>Forecast</dt>
          <dd data-testid="run-forecast-count">{formatNumber(done - failed)}</dd>
        </div>
        <div class={failed > 0 ? 'figure-alert' : ''}>
          <dt>
            {failed > 0 ? <Icon name="alert" /> : null} Failed items
          </dt>
          <dd data-testid="run-failed-count">{formatNumber(failed)}</dd>
        </div>
        <div>
          <dt>Horizon</dt>
          <dd>
            {run.settings.horizon ?? '–'} {run.settings.frequency ? `${run.settings.frequency}s` : 'periods'}
          </dd>
        </div>
        <div>
          <dt>Ranked by</dt>
          <dd>{(run.summary?.rankBy ?? run.settings.rankBy ?? '–').toUpperCase()}</dd>
        </div>
        <div>
          <dt>Started</dt>
          <dd>{formatTime(run.startedAt ?? run.createdAt)}</dd>
        </div>
        <div>
          <dt>Finished</dt>
          <dd>{formatTime(run.finishedAt)}</dd>
        </div>
      </dl>
      {run.failure ? (
        <p class="error" role="alert">
          The run failed: {run.failure.message} ({run.failure.code})
        </p>
      ) : null}
      <ModelMix run={run} />
    </>
  )
}
