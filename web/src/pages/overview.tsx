import { useEffect, useState } from 'preact/hooks'
import { ApiError, describeError, getJson } from '../api'
import { formatNumber, formatTime } from '../format'
import { Link, hrefs, navigate } from '../router'
import { followRun, followedRuns, unfollowRun } from '../run-poll'
import { useAsync } from '../use-async'
import { WORKLIST_KINDS, type Page, type Run, type SkuSummary, type WorklistCounts } from '../types'
import { RunCard, StatusBadge } from './run-card'
import { TagFigures } from './tag-figures'
import { KIND_LABELS } from './worklist'

/** Recent runs listed on the overview (GET /v1/runs, newest first). */
const RECENT = 6

interface LatestRuns {
  readonly runs: readonly Run[]
  readonly storedSkus: number
}

async function findLatestRuns(signal: AbortSignal): Promise<LatestRuns> {
  const [runs, skus] = await Promise.all([
    getJson<Page<Run>>(`/v1/runs?limit=${RECENT}`, signal),
    getJson<Page<SkuSummary>>('/v1/skus?limit=1', signal),
  ])
  return { runs: runs.items, storedSkus: skus.items.length }
}

const ORIGIN_LABELS: Record<string, string> = { inline: 'series sent with the run', scope: 'stored histories', schedule: 'schedule' }

/** The runs before the newest: status, what started them, when, progress; each links to its page. */
function RecentRuns({ runs }: { runs: readonly Run[] }) {
  if (runs.length === 0) return null
  return (
    <div class="table-wrap">
      <table class="data" data-testid="recent-runs">
        <caption>Earlier runs, newest first</caption>
        <thead>
          <tr>
            <th scope="col">Run</th>
            <th scope="col">Status</th>
            <th scope="col">Started by</th>
            <th scope="col">Submitted</th>
            <th scope="col" class="num">SKUs done</th>
          </tr>
        </thead>
        <tbody>
          {runs.map((r) => (
            <tr key={r.id}>
              <th scope="row">
                <Link href={hrefs.run(r.id)} class="mono">
                  {r.id.slice(0, 8)}
                </Link>
              </th>
              <td>
                <StatusBadge status={r.status} />
              </td>
              <td>{r.origin ? (ORIGIN_LABELS[r.origin.kind] ?? r.origin.kind) : '–'}</td>
              <td>{formatTime(r.createdAt)}</td>
              <td class="num">
                {formatNumber(r.progress.done)} of {formatNumber(r.progress.total)}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  )
}

/** What needs attention: SKUs on the worklist per kind, each linking to the filtered worklist. */
function Attention() {
  const counts = useAsync((signal) => getJson<WorklistCounts>('/v1/worklist/counts', signal), [])
  return (
    <section aria-labelledby="attention-heading">
      <h2 id="attention-heading">Needs attention</h2>
      {counts.state === 'loading' ? <p class="muted">Counting…</p> : null}
      {counts.state === 'failed' && counts.error instanceof ApiError && counts.error.status === 503 ? (
        <p class="muted">This server keeps no worklist (its accuracy services are not configured).</p>
      ) : null}
      {counts.state === 'failed' && !(counts.error instanceof ApiError && counts.error.status === 503) ? (
        <p class="error" role="alert">
          Could not count the worklist: {describeError(counts.error)}
        </p>
      ) : null}
      {counts.state === 'done' ? (
        <dl class="figures" data-testid="attention">
          {WORKLIST_KINDS.map((k) => (
            <div key={k} class={counts.value[k] > 0 ? 'figure-alert' : undefined}>
              <dt>{KIND_LABELS[k]}</dt>
              <dd>
                <Link href={hrefs.worklist(k)} data-kind={k}>
                  {formatNumber(counts.value[k])} SKU{counts.value[k] === 1 ? '' : 's'}
                </Link>
              </dd>
            </div>
          ))}
        </dl>
      ) : null}
      <p class="muted small">
        Biased: the tracking signal flags the forecasts. Large change: the newest forecast moved from the previous one. Failed
        fit: the last run could not forecast the SKU. Short history: a new product, too few periods to check the model.
      </p>
    </section>
  )
}

export function Overview() {
  const latest = useAsync(findLatestRuns, [])
  const [followed, setFollowed] = useState(followedRuns)
  const [runIdText, setRunIdText] = useState('')
  const [idProblem, setIdProblem] = useState('')

  const onFollow = (e: Event) => {
    e.preventDefault()
    const id = runIdText.trim()
    if (!/^[A-Za-z0-9_-]{1,100}$/.test(id)) {
      setIdProblem('A run id has only letters, digits, - and _.')
      return
    }
    setIdProblem('')
    setRunIdText('')
    setFollowed(followRun(id))
  }

  const latestId = latest.state === 'done' ? (latest.value.runs[0]?.id ?? null) : null
  return (
    <>
      <h1 tabIndex={-1}>Overview</h1>
      <Attention />
      <section aria-labelledby="latest-heading">
        <h2 id="latest-heading">Latest run</h2>
        {latest.state === 'loading' ? <p class="muted">Looking for the latest forecast run…</p> : null}
        {latest.state === 'failed' ? <p class="error" role="alert">Could not look for runs: {describeError(latest.error)}</p> : null}
        {latest.state === 'done' && latest.value.storedSkus === 0 ? (
          <p>
            No SKU histories are stored yet. <Link href={hrefs.upload()}>Upload a CSV file</Link> to start.
          </p>
        ) : null}
        {latest.state === 'done' && latest.value.storedSkus > 0 && latestId === null ? (
          <p>
            Histories are stored but no run is on record (runs are kept for the result retention). Submit a run (<code>POST /v1/runs</code>)
            and follow it here by its id.
          </p>
        ) : null}
        {latestId ? <RunCard runId={latestId} title="Run" /> : null}
        {latest.state === 'done' ? <RecentRuns runs={latest.value.runs.slice(1)} /> : null}
      </section>

      <section aria-labelledby="by-tag-heading">
        <h2 id="by-tag-heading">Accuracy and value added by tag</h2>
        <p class="muted small">
          Published forecasts of the tag's SKUs against what happened, pooled. Figures describe the past; review them before relying on a
          forecast for an order.
        </p>
        <TagFigures />
      </section>

      <section aria-labelledby="followed-heading">
        <h2 id="followed-heading">Runs you follow</h2>
        <form class="inline-form" onSubmit={onFollow}>
          <label for="follow-run">Run id</label>
          <input
            id="follow-run"
            value={runIdText}
            onInput={(e) => setRunIdText((e.target as HTMLInputElement).value)}
            autocomplete="off"
            spellcheck={false}
            aria-describedby={idProblem ? 'follow-run-problem' : undefined}
            aria-invalid={idProblem ? true : undefined}
          />
          <button type="submit">Follow</button>
          {idProblem ? (
            <span id="follow-run-problem" class="error">
              {idProblem}
            </span>
          ) : null}
        </form>
        {followed.filter((id) => id !== latestId).length === 0 ? (
          <p class="muted">No other runs followed in this browser session.</p>
        ) : null}
        {followed
          .filter((id) => id !== latestId)
          .map((id) => (
            <RunCard key={id} runId={id} title="Run" onRemove={() => setFollowed(unfollowRun(id))} />
          ))}
      </section>
    </>
  )
}

/** /app/runs/{id}: one run, followed live; the id is remembered for the overview. */
export function RunPage({ runId }: { runId: string }) {
  useEffect(() => void followRun(runId), [runId])
  return (
    <>
      <h1 tabIndex={-1}>Run {runId}</h1>
      <RunCard runId={runId} title="Run" onRemove={() => (unfollowRun(runId), navigate(hrefs.overview()))} />
    </>
  )
}
