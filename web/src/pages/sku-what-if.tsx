import { describeError, request } from '../api'
import { formatNumber, formatPrecise, modelLabel } from '../format'
import { Icon } from '../icons'
import type { ForecastPoint, History, HoldoutErrors, SkuForecast } from '../types'

/** One item of POST /v1/forecast: a forecast or a failure. */
interface WhatIfItem {
  readonly model?: string
  readonly holdoutErrors?: HoldoutErrors | null
  readonly forecast?: readonly ForecastPoint[]
  readonly failure?: { readonly code: string; readonly message: string }
}

export type WhatIf =
  | { readonly state: 'loading'; readonly model: string }
  | { readonly state: 'done'; readonly model: string; readonly item: WhatIfItem }
  | { readonly state: 'failed'; readonly model: string; readonly message: string }

/**
 * Forecasts the stored history again with one model, through the synchronous
 * POST /v1/forecast, which never publishes: the published forecast, what the
 * ERP pulls and what accuracy is scored against, stay as they are. Same
 * horizon, frequency and holdout as the published forecast; the season length
 * is the frequency's default.
 */
export async function forecastWithModel(history: History, published: SkuForecast, model: string): Promise<WhatIf> {
  const holdout = published.modelChoice.holdoutPeriods
  const body = {
    horizon: published.forecast.length,
    frequency: history.frequency,
    ...(holdout > 0 ? { holdoutPeriods: holdout } : {}),
    rankBy: published.modelChoice.rankBy,
    models: [model],
    series: [{ sku: history.sku, firstPeriod: history.firstPeriod, demand: history.demand }],
  }
  try {
    const answer = await request<{ items: readonly WhatIfItem[] }>('/v1/forecast', {
      method: 'POST',
      body: JSON.stringify(body),
      contentType: 'application/json',
    })
    const item = answer.notModified ? undefined : answer.body.items[0]
    if (!item) return { state: 'failed', model, message: 'The service answered without a forecast.' }
    if (item.failure) return { state: 'failed', model, message: `${item.failure.code}: ${item.failure.message}` }
    return { state: 'done', model, item }
  } catch (err) {
    return { state: 'failed', model, message: describeError(err) }
  }
}

export function WhatIfPanel({ whatIf, published, onClose }: { whatIf: WhatIf; published: SkuForecast; onClose: () => void }) {
  const rankBy = published.modelChoice.rankBy
  return (
    <section class="what-if" aria-labelledby="what-if-heading" data-testid="what-if">
      <h2 id="what-if-heading">What-if: {modelLabel(whatIf.model)}</h2>
      <p class="caution-inline">
        <Icon name="alert" /> Not published. This forecast is for comparison only: the ERP still pulls the published forecast above, and
        accuracy is scored against that one. To publish another model, run the SKU with that model listed.
      </p>
      {whatIf.state === 'loading' ? <p class="muted">Forecasting with {modelLabel(whatIf.model)}…</p> : null}
      {whatIf.state === 'failed' ? (
        <p class="error" role="alert">
          Could not forecast with {modelLabel(whatIf.model)}: {whatIf.message}
        </p>
      ) : null}
      {whatIf.state === 'done' ? (
        <>
          <p data-testid="what-if-error">
            Holdout {rankBy.toUpperCase()}: {formatPrecise(whatIf.item.holdoutErrors?.[rankBy])} (published model{' '}
            {modelLabel(published.model)}: {formatPrecise(published.holdoutErrors?.[rankBy])})
          </p>
          <div class="table-wrap">
            <table class="data" data-testid="what-if-table">
              <thead>
                <tr>
                  <th scope="col">Period</th>
                  <th scope="col" class="num">Published forecast</th>
                  <th scope="col" class="num">What-if</th>
                </tr>
              </thead>
              <tbody>
                {(whatIf.item.forecast ?? []).map((p, i) => (
                  <tr key={p.period}>
                    <th scope="row" class="mono">
                      {p.period}
                    </th>
                    <td class="num">{formatNumber(published.forecast[i]?.demand)}</td>
                    <td class="num">{formatNumber(p.demand)}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        </>
      ) : null}
      <button type="button" onClick={onClose}>
        Close the what-if
      </button>
    </section>
  )
}
