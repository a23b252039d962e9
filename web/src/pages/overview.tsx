import { useEffect, useState } from 'preact/hooks'
import { ApiError, describeError, getJson, skuPath } from '../api'
import { Link, hrefs, navigate } from '../router'
import { followRun, followedRuns, unfollowRun } from '../run-poll'
import { useAsync } from '../use-async'
import type { Page, SkuForecast, SkuSummary } from '../types'
import { RunCard } from './run-card'

/** How many SKUs the overview looks at to find the latest run. */
const SAMPLE = 10

interface LatestRun {
  readonly runId: string | null
  readonly storedSkus: number
}

/**
 * The API has no list of runs yet: the latest run is the one that produced the
 * newest forecast among the first SAMPLE stored SKUs.
 */
async function findLatestRun(signal: AbortSignal): Promise<LatestRun> {
  const page = await getJson<Page<SkuSummary>>(`/v1/skus?limit=${SAMPLE}`, signal)
  let best: { runId: string; producedAt: string } | null = null
  for (const item of page.items) {
    try {
      const f = await getJson<SkuForecast>(skuPath(item.sku, '/forecast?view=compact'), signal)
      if (best === null || f.producedAt > best.producedAt) best = { runId: f.runId, producedAt: f.producedAt }
    } catch (err) {
      if (!(err instanceof ApiError && err.status === 404)) throw err
    }
  }
  return { runId: best?.runId ?? null, storedSkus: page.items.length }
}

export function Overview() {
  const latest = useAsync(findLatestRun, [])
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

  const latestId = latest.state === 'done' ? latest.value.runId : null
  return (
    <>
      <h1 tabIndex={-1}>Overview</h1>
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
            Histories are stored but none has been forecast yet. Submit a run (<code>POST /v1/runs</code>) and follow it here by
            its id.
          </p>
        ) : null}
        {latestId ? <RunCard runId={latestId} title="Run" /> : null}
        <p class="muted small">The latest run is the one that produced the newest forecast among your first {SAMPLE} SKUs.</p>
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
