import { useEffect, useMemo, useRef, useState } from 'preact/hooks'
import { ApiError, describeError, getJson, skuPath } from '../api'
import { ChartView } from '../chart/chart-view'
import type { ChartInput } from '../chart/forecast-chart'
import type { BandLevel } from '../chart/palette'
import { formatNumber, formatPrecise, formatTime, modelLabel } from '../format'
import { Icon } from '../icons'
import { periodLabels } from '../periods'
import { Link, hrefs } from '../router'
import { useAsync } from '../use-async'
import { SkuAdjustments } from './sku-adjustments'
import { AccuracyRecord, ValueAdded } from './sku-accuracy'
import { WhatIfPanel, forecastWithModel, type WhatIf } from './sku-what-if'
import type { Candidate, ForecastPoint, History, SkuAccuracy, SkuForecast, SkuValueAdded } from '../types'

interface SkuData {
  /** null when only a run with inline series has forecast the SKU. */
  readonly history: History | null
  readonly forecast: SkuForecast | null
  /** null until a published forecast of the SKU has been scored. */
  readonly accuracy: SkuAccuracy | null
  /** Why the accuracy record could not be read (the rest of the page still shows). */
  readonly accuracyError: string | null
  /** Forecast value added; null until a period is scored or when it could not be read. */
  readonly valueAdded: SkuValueAdded | null
}

function orNullOn404<T>(promise: Promise<T>): Promise<T | null> {
  return promise.catch((err: unknown) => {
    if (err instanceof ApiError && err.status === 404) return null
    throw err
  })
}

async function loadSku(sku: string, signal: AbortSignal): Promise<SkuData> {
  const forecast = orNullOn404(getJson<SkuForecast>(skuPath(sku, '/forecast'), signal))
  const accuracy = orNullOn404(getJson<SkuAccuracy>(skuPath(sku, '/accuracy'), signal)).then(
    (value) => ({ value, error: null }),
    (err: unknown) => ({ value: null, error: describeError(err) }),
  )
  // Value added is part of the accuracy record: when it cannot be read, the record says why.
  const valueAdded = orNullOn404(getJson<SkuValueAdded>(skuPath(sku, '/value-added'), signal)).catch(() => null)
  const history = await orNullOn404(getJson<History>(skuPath(sku, '/history'), signal))
  const scored = await accuracy
  const found = { history, forecast: await forecast, accuracy: scored.value, accuracyError: scored.error, valueAdded: await valueAdded }
  if (found.history === null && found.forecast === null) throw new ApiError(404, { detail: `No stored history or forecast for ${sku}` })
  return found
}

function band(p: ForecastPoint, level: number) {
  return p.intervals.find((i) => i.level === level)
}

/** The chart's time line: the history's periods, then forecast periods past its end. */
function chartInput(data: SkuData, whatIf: WhatIf | null): ChartInput {
  const { history, forecast, accuracy } = data
  const labels =
    history === null
      ? []
      : (periodLabels(history.frequency, history.firstPeriod, history.periodCount) ?? history.demand.map((_, i) => String(i + 1)))
  const points = forecast?.forecast ?? []
  let start = points.length > 0 ? labels.indexOf(points[0]!.period) : -1
  if (start < 0) start = labels.length
  const periods = [...labels.slice(0, start), ...points.map((p) => p.period)]
  for (let i = periods.length; i < labels.length; i++) periods.push(labels[i]!)
  // Each scored period's forecast, at its place on the time line (periods outside it are left out).
  const index = new Map(periods.map((p, i) => [p, i]))
  const past: (number | null)[] = periods.map(() => null)
  for (const scored of accuracy?.periods ?? []) {
    const i = index.get(scored.period)
    if (i !== undefined) past[i] = scored.forecastDemand
  }
  return {
    past,
    whatIf:
      whatIf?.state === 'done' && whatIf.item.forecast
        ? { label: modelLabel(whatIf.model), demand: whatIf.item.forecast.map((p) => p.demand) }
        : null,
    periods,
    history: history?.demand ?? [],
    forecastStart: start,
    forecast: points.map((p) => {
      const bands: Partial<Record<BandLevel, { low: number; high: number }>> = {}
      for (const level of [80, 95] as const) {
        const i = band(p, level)
        if (i) bands[level] = { low: i.low, high: i.high }
      }
      return { demand: p.demand, bands, adjusted: p.adjustment ? (p.finalDemand ?? null) : null }
    }),
    holdoutPeriods: forecast?.modelChoice.holdoutPeriods ?? 0,
  }
}

const ERROR_LABELS: Record<string, string> = {
  mae: 'MAE',
  rmse: 'RMSE',
  mape: 'MAPE %',
  smape: 'sMAPE %',
  mase: 'MASE',
  wape: 'WAPE %',
  msis: 'MSIS',
  pinball: 'Pinball',
}

function errorKeys(candidates: readonly Candidate[]): string[] {
  const keys = new Set<string>()
  for (const c of candidates) for (const k of Object.keys(c.holdoutErrors ?? {})) keys.add(k)
  const known = Object.keys(ERROR_LABELS).filter((k) => keys.has(k))
  return [...known, ...[...keys].filter((k) => !(k in ERROR_LABELS))]
}

function Caution() {
  return (
    <aside class="caution" role="note" aria-label="Caution" data-testid="caution">
      <Icon name="alert" />
      <p>
        <strong>Statistical estimates — review before ordering.</strong> The forecast, its bands and the replenishment figures
        are computed from past demand alone. Promotions, lost or new customers, price changes and supply problems are not in
        them. Check the model, its holdout errors and the warnings before a figure drives an order or a stock target.
      </p>
    </aside>
  )
}

function Candidates({ forecast, onTry }: { forecast: SkuForecast; onTry: ((model: string) => void) | null }) {
  const candidates = forecast.candidates ?? []
  if (candidates.length === 0) return <p class="muted">This answer carries no candidates table.</p>
  const keys = errorKeys(candidates)
  const rankBy = forecast.modelChoice.rankBy
  return (
    <div class="table-wrap">
      <table class="data" data-testid="candidates">
        <caption>
          Candidate models and their errors on the {forecast.modelChoice.holdoutPeriods} holdout periods, ranked by{' '}
          {ERROR_LABELS[rankBy] ?? rankBy} (lower is better)
        </caption>
        <thead>
          <tr>
            <th scope="col">Model</th>
            <th scope="col">Family</th>
            <th scope="col">Status</th>
            {keys.map((k) => (
              <th key={k} scope="col" class={`num ${k === rankBy ? 'ranked' : ''}`}>
                {ERROR_LABELS[k] ?? k}
                {k === rankBy ? <span class="visually-hidden"> (ranks the models)</span> : null}
              </th>
            ))}
            <th scope="col">Note</th>
            {onTry ? <th scope="col">What-if</th> : null}
          </tr>
        </thead>
        <tbody>
          {candidates.map((c) => {
            const chosen = c.model === forecast.model
            return (
              <tr key={c.model} class={chosen ? 'chosen' : ''}>
                <th scope="row">
                  {chosen ? (
                    <span class="chosen-mark">
                      <Icon name="chosen" /> chosen:{' '}
                    </span>
                  ) : null}
                  {modelLabel(c.model)}
                </th>
                <td>{c.family}</td>
                <td>{c.status}</td>
                {keys.map((k) => (
                  <td key={k} class="num">
                    {formatPrecise(c.holdoutErrors?.[k])}
                  </td>
                ))}
                <td>{c.reason ?? ''}</td>
                {onTry ? (
                  <td>
                    {!chosen && c.status === 'scored' ? (
                      <button type="button" class="link-button" onClick={() => onTry(c.model)} aria-label={`Try ${modelLabel(c.model)} (what-if, not published)`}>
                        Try
                      </button>
                    ) : null}
                  </td>
                ) : null}
              </tr>
            )
          })}
        </tbody>
      </table>
    </div>
  )
}

const REPLENISHMENT_LABELS: Record<string, string> = {
  leadTimePeriods: 'Lead time (periods)',
  leadTimeDays: 'Lead time (days)',
  reviewPeriods: 'Review period (periods)',
  leadTimeSdPeriods: 'Lead-time spread (periods)',
  serviceLevel: 'Target service level',
  minimumOrder: 'Minimum order',
  packSize: 'Pack size',
  leadTimeDemand: 'Demand over the lead time',
  coverDemand: 'Demand over lead time and review period',
  sigma: 'Spread of that demand (σ)',
  z: 'Service factor (z)',
  safetyStock: 'Safety stock',
  reorderPoint: 'Reorder point',
  orderQuantity: 'Order quantity',
  formula: 'Formula',
}

function Replenishment({ figures }: { figures: Readonly<Record<string, unknown>> }) {
  const entries = Object.entries(figures).filter(([, v]) => typeof v === 'number' || typeof v === 'string' || v === null)
  return (
    <dl class="figures" data-testid="replenishment">
      {entries.map(([k, v]) => (
        <div key={k}>
          <dt>{REPLENISHMENT_LABELS[k] ?? k}</dt>
          <dd>{typeof v === 'number' ? (k === 'serviceLevel' && v < 1 ? `${formatPrecise(v * 100)}%` : formatPrecise(v)) : String(v ?? '–')}</dd>
        </div>
      ))}
    </dl>
  )
}

function ForecastTable({ forecast }: { forecast: SkuForecast }) {
  const levels = [...new Set(forecast.forecast.flatMap((p) => p.intervals.map((i) => i.level)))].sort((a, b) => a - b)
  return (
    <details class="figures-table">
      <summary>Forecast figures as a table</summary>
      <div class="table-wrap">
        <table class="data" data-testid="forecast-table">
          <thead>
            <tr>
              <th scope="col">Period</th>
              <th scope="col" class="num">Forecast</th>
              <th scope="col" class="num">Final (adjusted)</th>
              {levels.map((l) => (
                <th key={l} scope="col" class="num">
                  {l}% band
                </th>
              ))}
            </tr>
          </thead>
          <tbody>
            {forecast.forecast.map((p) => (
              <tr key={p.period}>
                <th scope="row" class="mono">
                  {p.period}
                </th>
                <td class="num">{formatNumber(p.demand)}</td>
                <td class="num">{p.adjustment ? <strong>{formatNumber(p.finalDemand)}</strong> : formatNumber(p.finalDemand ?? p.demand)}</td>
                {levels.map((l) => {
                  const i = band(p, l)
                  return (
                    <td key={l} class="num">
                      {i ? `${formatNumber(i.low)} – ${formatNumber(i.high)}` : '–'}
                    </td>
                  )
                })}
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </details>
  )
}

function Params({ params }: { params: SkuForecast['params'] }) {
  const entries = Object.entries(params)
  if (entries.length === 0) return null
  return (
    <dl class="figures params">
      {entries.map(([k, v]) => (
        <div key={k}>
          <dt class="mono">{k}</dt>
          <dd>{Array.isArray(v) ? v.map((x) => formatPrecise(x)).join(', ') : formatPrecise(v as number)}</dd>
        </div>
      ))}
    </dl>
  )
}

export function SkuPage({ sku }: { sku: string }) {
  // Bumped after an adjustment: the forecast is read again, and the page keeps showing the
  // figures it has meanwhile (so the form and the chart do not vanish while it loads).
  const [version, setVersion] = useState(0)
  const [whatIf, setWhatIf] = useState<WhatIf | null>(null)
  useEffect(() => setWhatIf(null), [sku])
  const loaded = useAsync((signal) => loadSku(sku, signal), [sku, version])
  const last = useRef<{ sku: string; data: SkuData } | null>(null)
  if (loaded.state === 'done') last.current = { sku, data: loaded.value }
  const data = loaded.state === 'done' ? loaded.value : loaded.state === 'loading' && last.current?.sku === sku ? last.current.data : null
  const input = useMemo(() => (data ? chartInput(data, whatIf) : null), [data, whatIf])
  const tryModel = async (model: string) => {
    if (!data?.history || !data.forecast) return
    setWhatIf({ state: 'loading', model })
    const answer = await forecastWithModel(data.history, data.forecast, model)
    // Only the newest request counts: a slower earlier answer must not replace it.
    setWhatIf((current) => (current?.model === model ? answer : current))
  }

  useEffect(() => {
    document.title = `${sku} · Almanac workbench`
  }, [sku])

  const describe = (i: number): string => {
    if (!input) return ''
    const period = input.periods[i] ?? ''
    if (i >= input.forecastStart && data?.forecast) {
      const p = data.forecast.forecast[i - input.forecastStart]
      if (p) {
        const ranges = p.intervals.map((b) => `${b.level}% band ${formatNumber(b.low)} to ${formatNumber(b.high)}`).join(', ')
        const adjusted = p.adjustment ? `; adjusted to ${formatNumber(p.finalDemand)}` : ''
        return `${period}: forecast ${formatNumber(p.demand)}${adjusted}${ranges ? `; ${ranges}` : ''}`
      }
    }
    const value = input.history[i]
    const holdout = i < input.forecastStart && i >= input.forecastStart - input.holdoutPeriods
    return `${period}: demand ${value === null || value === undefined ? 'missing' : formatNumber(value)}${holdout ? ' (holdout period)' : ''}`
  }

  return (
    <div data-testid="sku-page" data-ready={input ? 'true' : undefined}>
      <p class="crumbs">
        <Link href={hrefs.skus()}>SKUs</Link> <span aria-hidden="true">›</span> <span class="mono">{sku}</span>
      </p>
      <h1 tabIndex={-1} class="mono">
        {sku}
      </h1>
      {loaded.state === 'loading' && !data ? <p class="muted">Loading the history and forecast…</p> : null}
      {loaded.state === 'failed' ? (
        <p class="error" role="alert">
          {loaded.error instanceof ApiError && loaded.error.status === 404
            ? `No stored history or forecast for ${sku}.`
            : `Could not load ${sku}: ${describeError(loaded.error)}`}
        </p>
      ) : null}
      {data && input ? (
        <>
          {data.history ? (
            <p class="subtitle">
              {data.history.frequency} history {data.history.firstPeriod} – {data.history.lastPeriod} ({formatNumber(data.history.periodCount)}{' '}
              periods)
              {data.history.tags.map((t) => (
                <Link key={t} href={hrefs.skus('', t)} class="tag">
                  {t}
                </Link>
              ))}
            </p>
          ) : (
            <p class="subtitle">No stored history: this forecast came from a run with the series sent inline.</p>
          )}
          <Caution />
          <ChartView input={input} describe={describe} onDrawn={() => performance.mark('sku-page-drawn')} />
          {data.forecast === null ? (
            <p>This SKU has not been forecast yet (or its last results have expired). Its history is shown alone.</p>
          ) : (
            <>
              {whatIf ? <WhatIfPanel whatIf={whatIf} published={data.forecast} onClose={() => setWhatIf(null)} /> : null}
              <SkuForecastDetails forecast={data.forecast} onTry={data.history ? (m) => void tryModel(m) : null} />
              <SkuAdjustments sku={sku} forecast={data.forecast} onChanged={() => setVersion((v) => v + 1)} />
            </>
          )}
          <section aria-labelledby="accuracy-heading">
            <h2 id="accuracy-heading">Accuracy record</h2>
            {data.accuracyError ? (
              <p class="error">Could not read the accuracy record: {data.accuracyError}</p>
            ) : (
              <AccuracyRecord accuracy={data.accuracy} />
            )}
            <h3>Forecast value added</h3>
            <ValueAdded added={data.valueAdded} />
          </section>
        </>
      ) : null}
    </div>
  )
}

function SkuForecastDetails({ forecast, onTry }: { forecast: SkuForecast; onTry: ((model: string) => void) | null }) {
  const choice = forecast.modelChoice
  return (
    <>
      <ForecastTable forecast={forecast} />
      <section aria-labelledby="model-heading">
        <h2 id="model-heading">Model</h2>
        <dl class="figures">
          <div>
            <dt>Chosen model</dt>
            <dd data-testid="chosen-model">{modelLabel(forecast.model)}</dd>
          </div>
          <div>
            <dt>Family</dt>
            <dd>{forecast.family}</dd>
          </div>
          <div>
            <dt>Chosen by</dt>
            <dd>
              {choice.method === 'holdout'
                ? `lowest ${ERROR_LABELS[choice.rankBy] ?? choice.rankBy} on ${choice.holdoutPeriods} holdout periods${choice.holdoutOrigins > 1 ? ` × ${choice.holdoutOrigins} origins` : ''}`
                : choice.method}
            </dd>
          </div>
          <div>
            <dt>Bands</dt>
            <dd>{forecast.intervalMethod}</dd>
          </div>
          <div>
            <dt>Forecast made</dt>
            <dd>
              {formatTime(forecast.producedAt)} by run <Link href={hrefs.run(forecast.runId)} class="mono">{forecast.runId}</Link>
            </dd>
          </div>
        </dl>
        <h3>Fitted parameters</h3>
        <Params params={forecast.params} />
      </section>
      <section aria-labelledby="warnings-heading">
        <h2 id="warnings-heading">Warnings</h2>
        {forecast.warnings.length === 0 ? (
          <p class="muted">No warnings for this forecast.</p>
        ) : (
          <ul class="warnings" data-testid="warnings">
            {forecast.warnings.map((w) => (
              <li key={w.code}>
                <Icon name="alert" /> <span class="mono">{w.code}</span>: {w.message}
              </li>
            ))}
          </ul>
        )}
      </section>
      <section aria-labelledby="candidates-heading">
        <h2 id="candidates-heading">Candidates</h2>
        <Candidates forecast={forecast} onTry={onTry} />
      </section>
      <section aria-labelledby="replenishment-heading">
        <h2 id="replenishment-heading">Replenishment</h2>
        {forecast.replenishment ? (
          <Replenishment figures={forecast.replenishment} />
        ) : (
          <p class="muted">The run that made this forecast had no replenishment settings.</p>
        )}
      </section>
    </>
  )
}
