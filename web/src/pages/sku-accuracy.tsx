import { formatNumber, formatPrecise } from '../format'
import { Icon } from '../icons'
import type { SkuAccuracy, SkuValueAdded } from '../types'

/**
 * The SKU's accuracy record: how its published forecasts did against what
 * happened (GET /v1/skus/{sku}/accuracy), newest periods first. The same
 * forecasts are the chart's diamonds.
 */
export function AccuracyRecord({ accuracy }: { accuracy: SkuAccuracy | null }) {
  if (accuracy === null || accuracy.periods.length === 0) {
    return <p class="muted">No published forecast of this SKU has been scored against actual demand yet.</p>
  }
  const periods = [...accuracy.periods].reverse()
  return (
    <>
      {accuracy.flagged ? (
        <p class="flag" data-testid="accuracy-flag">
          <Icon name="alert" /> <strong>Biased:</strong> the forecasts lean one way ({accuracy.flaggedBy.join(', ')}). Review the model or the
          data before ordering on them.
        </p>
      ) : null}
      <dl class="figures" data-testid="accuracy-summary">
        <div>
          <dt>Periods scored</dt>
          <dd>{formatNumber(accuracy.scoredPeriods)}</dd>
        </div>
        <div>
          <dt>Mean absolute error</dt>
          <dd>{formatPrecise(accuracy.mae)}</dd>
        </div>
        <div>
          <dt>Bias (actual − forecast, mean)</dt>
          <dd>{formatPrecise(accuracy.bias)}</dd>
        </div>
        <div>
          <dt>MAPE %</dt>
          <dd>{formatPrecise(accuracy.mape)}</dd>
        </div>
        <div>
          <dt>Tracking signal (limit ±{formatPrecise(accuracy.trackingLimit)})</dt>
          <dd>{formatPrecise(accuracy.trackingSignal)}</dd>
        </div>
        <div>
          <dt>Smoothed tracking signal</dt>
          <dd>{formatPrecise(accuracy.smoothedTrackingSignal)}</dd>
        </div>
      </dl>
      <details class="figures-table">
        <summary>Scored periods as a table</summary>
        <div class="table-wrap">
          <table class="data" data-testid="accuracy-periods">
            <thead>
              <tr>
                <th scope="col">Period</th>
                <th scope="col" class="num">Forecast</th>
                <th scope="col" class="num">Actual</th>
                <th scope="col" class="num">Actual − forecast</th>
                <th scope="col">Run</th>
              </tr>
            </thead>
            <tbody>
              {periods.map((p) => (
                <tr key={p.period}>
                  <th scope="row" class="mono">
                    {p.period}
                  </th>
                  <td class="num">{formatNumber(p.forecastDemand)}</td>
                  <td class="num">{formatNumber(p.actualDemand)}</td>
                  <td class="num">{formatNumber(p.deviation)}</td>
                  <td class="mono">{p.runId}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </details>
    </>
  )
}

/** A value added in demand units, signed, with its reading in words (colour never carries it alone). */
function Added({ value }: { value: number | null }) {
  if (value === null) return <>–</>
  const verdict = value > 0 ? 'better' : value < 0 ? 'worse' : 'no change'
  return (
    <>
      {value > 0 ? '+' : ''}
      {formatPrecise(value)} ({verdict})
    </>
  )
}

/**
 * Forecast value added (a term of the trade): did the planners' adjustments beat
 * the statistical forecast, and did both beat the naive (last value) forecast?
 * Mean absolute errors over the scored periods, from GET /v1/skus/{sku}/value-added.
 */
export function ValueAdded({ added }: { added: SkuValueAdded | null }) {
  if (added === null || added.scoredPeriods === 0) return <p class="muted">Forecast value added shows once a forecast period is scored.</p>
  return (
    <div class="table-wrap">
      <table class="data" data-testid="value-added">
        <caption>
          Mean absolute error over {formatNumber(added.scoredPeriods)} scored periods ({formatNumber(added.adjustedPeriods)} adjusted); value added
          is the error removed, in demand units
        </caption>
        <thead>
          <tr>
            <th scope="col">Forecast</th>
            <th scope="col" class="num">Mean absolute error</th>
            <th scope="col">Value added</th>
          </tr>
        </thead>
        <tbody>
          <tr>
            <th scope="row">Naive (last value)</th>
            <td class="num">{formatPrecise(added.mae.naive)}</td>
            <td>baseline</td>
          </tr>
          <tr>
            <th scope="row">Statistical</th>
            <td class="num">{formatPrecise(added.mae.statistical)}</td>
            <td>
              <Added value={added.valueAdded.statistical} /> against naive
            </td>
          </tr>
          <tr>
            <th scope="row">Final (with adjustments)</th>
            <td class="num">{formatPrecise(added.mae.final)}</td>
            <td>
              <Added value={added.valueAdded.adjustments} /> against statistical
            </td>
          </tr>
          {added.byAuthor.map((a) => (
            <tr key={a.author}>
              <th scope="row">Adjustments by {a.author}</th>
              <td class="num">{formatNumber(a.adjustedPeriods)} periods</td>
              <td>
                <Added value={a.valueAdded.adjustments} /> against statistical
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  )
}
