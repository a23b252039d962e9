import { useEffect, useLayoutEffect, useRef, useState } from 'preact/hooks'
import { drawForecastChart, type ChartInput, type DrawnSummary, type ForecastChart } from './forecast-chart'
import { CHART_COLOURS, paintSwatch, type BandLevel } from './palette'
import { formatNumber } from '../format'

interface Props {
  readonly input: ChartInput
  /** Read out under the chart for the period under the cursor. */
  readonly describe: (index: number) => string
  readonly onDrawn?: (summary: DrawnSummary) => void
}

function Swatch({ level }: { level: BandLevel }) {
  const ref = useRef<HTMLCanvasElement>(null)
  useEffect(() => {
    if (ref.current) paintSwatch(ref.current, level)
  }, [level])
  return <canvas ref={ref} class="swatch" aria-hidden="true" />
}

function LineSwatch({ colour, dashed, dotted, squares }: { colour: string; dashed?: boolean; dotted?: boolean; squares?: boolean }) {
  return (
    <svg class="swatch" viewBox="0 0 28 14" aria-hidden="true">
      <line x1="1" y1="7" x2="27" y2="7" stroke={colour} stroke-width="2.5" stroke-dasharray={dashed ? '6 3' : dotted ? '2 3' : undefined} />
      {dashed ? <circle cx="14" cy="7" r="3" fill="#fff" stroke={colour} stroke-width="1.5" /> : null}
      {squares ? <rect x="10" y="3" width="8" height="8" fill={colour} /> : null}
    </svg>
  )
}

function DiamondSwatch({ colour }: { colour: string }) {
  return (
    <svg class="swatch" viewBox="0 0 28 14" aria-hidden="true">
      <path d="M14 2 L19 7 L14 12 L9 7 Z" fill="none" stroke={colour} stroke-width="2" />
    </svg>
  )
}

/**
 * The chart with its legend and a keyboard cursor: focus the chart, then Left/Right
 * (Home/End) step through the periods and the figures are read out below it.
 * The drawn elements are listed on the figure's data attributes.
 */
export function ChartView({ input, describe, onDrawn }: Props) {
  const host = useRef<HTMLDivElement>(null)
  const chart = useRef<ForecastChart | null>(null)
  const [readout, setReadout] = useState('')
  const [drawn, setDrawn] = useState<DrawnSummary | null>(null)

  // A layout effect: the chart is drawn before the browser first paints the page with its data.
  useLayoutEffect(() => {
    const el = host.current
    if (!el) return
    let width = el.clientWidth || 800
    const c = drawForecastChart(el, input, width, {
      onCursor: (i) => setReadout(i === null ? '' : describe(i)),
      onDrawn: (summary) => {
        setDrawn(summary)
        onDrawn?.(summary)
      },
    })
    chart.current = c
    // Redraw only when the width changes (the observer also reports the first size).
    const observer = new ResizeObserver(() => {
      if (el.clientWidth === width) return
      width = el.clientWidth
      c.resize(width)
    })
    observer.observe(el)
    return () => {
      observer.disconnect()
      c.destroy()
      chart.current = null
    }
  }, [input])

  const onKey = (e: KeyboardEvent) => {
    const c = chart.current
    if (!c) return
    const moves: Record<string, number | 'first' | 'last'> = { ArrowLeft: -1, ArrowRight: 1, PageUp: -12, PageDown: 12, Home: 'first', End: 'last' }
    const move = moves[e.key]
    if (move === undefined) return
    e.preventDefault()
    setReadout(describe(c.moveCursor(move)))
  }

  const levels = ([80, 95] as const).filter((l) => drawn?.bands.some((b) => b.level === l) ?? true)
  return (
    <figure
      class="chart"
      data-testid="sku-chart"
      data-history-points={drawn?.historyPoints}
      data-forecast-points={drawn?.forecastPoints}
      data-adjusted-points={drawn?.adjustedPoints}
      data-past-points={drawn?.pastPoints}
      data-what-if-points={drawn?.whatIfPoints}
      data-bands={drawn?.bands.map((b) => `${b.level}:${b.points}`).join(',')}
      data-holdout-periods={drawn?.holdoutPeriods}
      data-probes={drawn ? JSON.stringify(drawn.probes) : undefined}
    >
      <div
        ref={host}
        class="chart-canvas"
        tabIndex={0}
        role="img"
        aria-label={`Chart of history and forecast. ${formatNumber(input.history.length)} history periods, ${input.forecast.length} forecast periods. Use the arrow keys to read the figures of each period.`}
        onKeyDown={onKey}
      />
      <p class="chart-readout" aria-live="polite">
        {readout || 'Point at the chart, or focus it and use the arrow keys, to read a period’s figures.'}
      </p>
      <figcaption>
        <ul class="legend" aria-label="Legend">
          <li>
            <LineSwatch colour={CHART_COLOURS.history} /> History (solid line)
          </li>
          <li>
            <LineSwatch colour={CHART_COLOURS.forecast} dashed /> Forecast (dashed line with dots)
          </li>
          {input.forecast.some((p) => p.adjusted !== undefined && p.adjusted !== null) ? (
            <li>
              <LineSwatch colour={CHART_COLOURS.adjusted} squares /> Adjusted forecast (solid line with squares, labelled “adjusted”)
            </li>
          ) : null}
          {(input.past ?? []).some((v) => v !== null) ? (
            <li>
              <DiamondSwatch colour={CHART_COLOURS.past} /> Past forecast: what was forecast for a period that has happened (hollow diamonds)
            </li>
          ) : null}
          {input.whatIf && input.whatIf.demand.length > 0 ? (
            <li>
              <LineSwatch colour={CHART_COLOURS.whatIf} dotted /> What-if: {input.whatIf.label}, not published (dotted line, labelled)
            </li>
          ) : null}
          {levels.map((level) => (
            <li key={level}>
              <Swatch level={level} /> {level}% band ({level === 95 ? 'pale, hatched' : 'solid'})
            </li>
          ))}
          <li>
            <span class="swatch swatch-holdout" aria-hidden="true" /> Holdout: periods held back to score the models
          </li>
        </ul>
      </figcaption>
    </figure>
  )
}
