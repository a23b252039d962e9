import { useEffect, useState } from 'preact/hooks'
import { describeError, getJson } from '../api'
import { formatNumber, formatPrecise } from '../format'
import { useAsync } from '../use-async'
import type { Page, TagAccuracy, TagValueAdded } from '../types'
import { ValueAdded } from './sku-accuracy'

/** Tags offered for choosing (the first page of GET /v1/tags, most tenants have fewer). */
const TAG_PAGE = 200

async function loadTags(signal: AbortSignal): Promise<readonly { tag: string; skus: number }[]> {
  return (await getJson<Page<{ tag: string; skus: number }>>(`/v1/tags?limit=${TAG_PAGE}`, signal)).items
}

async function loadFigures(tag: string, lag: string, signal: AbortSignal): Promise<{ accuracy: TagAccuracy; added: TagValueAdded }> {
  const q = new URLSearchParams({ tag })
  const accuracyQuery = new URLSearchParams({ tag, ...(lag === '' ? {} : { lag }) })
  const [accuracy, added] = await Promise.all([
    getJson<TagAccuracy>(`/v1/accuracy/by-tag?${accuracyQuery}`, signal),
    getJson<TagValueAdded>(`/v1/value-added/by-tag?${q}`, signal),
  ])
  return { accuracy, added }
}

/**
 * Accuracy and forecast value added pooled over the SKUs of one tag (a
 * category, a planner's range), at a chosen lag: how did the published
 * forecasts of the group do, and did the adjustments help, per planner.
 */
export function TagFigures() {
  const tags = useAsync(loadTags, [])
  const [tag, setTag] = useState('')
  const [lag, setLag] = useState('')
  useEffect(() => {
    if (tag === '' && tags.state === 'done' && tags.value.length > 0) setTag(tags.value[0]!.tag)
  }, [tags.state])
  const figures = useAsync((signal) => (tag === '' ? Promise.resolve(null) : loadFigures(tag, lag, signal)), [tag, lag])

  if (tags.state === 'failed') return <p class="error">Could not read the tags: {describeError(tags.error)}</p>
  if (tags.state === 'done' && tags.value.length === 0) return <p class="muted">No stored history carries a tag yet.</p>
  const a = figures.state === 'done' ? figures.value?.accuracy : undefined
  return (
    <div data-testid="tag-figures">
      <form class="inline-form" onSubmit={(e) => e.preventDefault()}>
        <label for="tag-choice">Tag</label>
        <select id="tag-choice" value={tag} onChange={(e) => setTag((e.target as HTMLSelectElement).value)}>
          {(tags.state === 'done' ? tags.value : []).map((t) => (
            <option key={t.tag} value={t.tag}>
              {t.tag} ({formatNumber(t.skus)} SKUs)
            </option>
          ))}
        </select>
        <label for="lag-choice">Forecasts scored</label>
        <select id="lag-choice" value={lag} onChange={(e) => setLag((e.target as HTMLSelectElement).value)}>
          <option value="">newest covering each period</option>
          <option value="1">1 period ahead (lag 1)</option>
          <option value="2">2 periods ahead (lag 2)</option>
          <option value="3">3 periods ahead (lag 3)</option>
        </select>
      </form>
      {figures.state === 'loading' ? <p class="muted">Pooling the tag's scored periods…</p> : null}
      {figures.state === 'failed' ? <p class="error">Could not pool the tag: {describeError(figures.error)}</p> : null}
      {a ? (
        <dl class="figures" data-testid="tag-accuracy">
          <div>
            <dt>SKUs scored</dt>
            <dd>{formatNumber(a.skus)}</dd>
          </div>
          <div>
            <dt>Periods scored</dt>
            <dd>{formatNumber(a.scoredPeriods)}</dd>
          </div>
          <div>
            <dt>WAPE %</dt>
            <dd>{formatPrecise(a.wape)}</dd>
          </div>
          <div>
            <dt>Mean absolute error</dt>
            <dd>{formatPrecise(a.mae)}</dd>
          </div>
          <div>
            <dt>Bias (actual − forecast, mean)</dt>
            <dd>{formatPrecise(a.bias)}</dd>
          </div>
          <div>
            <dt>SKUs flagged as biased</dt>
            <dd>{formatNumber(a.flaggedSkus)}</dd>
          </div>
        </dl>
      ) : null}
      {figures.state === 'done' && figures.value ? (
        <>
          <h3>Forecast value added in this tag</h3>
          <ValueAdded added={figures.value.added} />
        </>
      ) : null}
    </div>
  )
}
