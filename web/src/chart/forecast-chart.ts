import uPlot from 'uplot'
import 'uplot/dist/uPlot.min.css'
import { CHART_COLOURS, bandFill, type BandLevel } from './palette'

/**
 * The SKU chart: history, the holdout stretch shaded, the point forecast and its
 * 80% and 95% bands. The bands differ by lightness and by pattern (95%: hatched,
 * 80%: solid) and carry labels, so neither colour nor colour vision is needed to
 * tell them apart. Drawn on canvas by uPlot (docs/workbench.md says why).
 */

export interface ChartInput {
  /** Period labels of the whole time line: the history's, then any forecast periods after it. */
  readonly periods: readonly string[]
  /** Demand for the first history.length periods. */
  readonly history: readonly (number | null)[]
  /**
   * Index in `periods` of the first forecast period: history.length when the forecast follows the
   * stored history, earlier when the history was extended after the run.
   */
  readonly forecastStart: number
  /** Forecast points, in order, from forecastStart on. */
  readonly forecast: readonly {
    readonly demand: number
    readonly bands: Partial<Record<BandLevel, { low: number; high: number }>>
    /** The final demand of a period a planner adjusted; absent or null when not adjusted. */
    readonly adjusted?: number | null
  }[]
  /** The `holdoutPeriods` periods before forecastStart were held back to score the models. */
  readonly holdoutPeriods: number
  /**
   * Past published forecasts against what happened: for each index of `periods`, the forecast a
   * scored period was judged against (its accuracy record), or null.
   */
  readonly past?: readonly (number | null)[]
  /** A what-if forecast by another model, from forecastStart on (never published). */
  readonly whatIf?: { readonly label: string; readonly demand: readonly number[] } | null
}

/** Where a test (or a person) can look to see each drawn element: canvas (device) pixels from its top left. */
export interface DrawnProbe {
  readonly name: 'band-80' | 'band-95' | 'outside-bands' | 'holdout' | 'history' | 'adjusted' | 'past' | 'what-if'
  readonly x: number
  readonly y: number
}

export interface DrawnSummary {
  readonly historyPoints: number
  readonly forecastPoints: number
  /** Adjusted periods drawn (the adjusted forecast's markers). */
  readonly adjustedPoints: number
  /** Past published forecasts drawn (diamond markers over the history). */
  readonly pastPoints: number
  /** Points of the what-if forecast drawn (0 when none is shown). */
  readonly whatIfPoints: number
  readonly bands: readonly { readonly level: BandLevel; readonly points: number }[]
  readonly holdoutPeriods: number
  readonly probes: readonly DrawnProbe[]
}

export interface ForecastChart {
  /** Moves the keyboard cursor by `step` periods (or to an end), returning the period index shown. */
  moveCursor(step: number | 'first' | 'last'): number
  resize(width: number): void
  destroy(): void
}

const HEIGHT = 340

function compact(value: number): string {
  const abs = Math.abs(value)
  if (abs >= 1e6) return `${(value / 1e6).toFixed(1)}M`
  if (abs >= 1e4) return `${Math.round(value / 1e3)}k`
  if (abs >= 100 || Number.isInteger(value)) return String(Math.round(value))
  return value.toFixed(1)
}

/**
 * Columns for uPlot: x, history, high/low of each band, the forecast (over the bands), then the
 * adjusted forecast when any period was adjusted (drawn last, over everything).
 */
interface Columns {
  readonly data: uPlot.AlignedData
  readonly levels: BandLevel[]
  readonly adjusted: boolean
  readonly past: boolean
  readonly whatIf: boolean
  readonly pastColumn: readonly (number | null)[]
  readonly whatIfColumn: readonly (number | null)[]
}

function columns(input: ChartInput): Columns {
  const n = input.periods.length
  const h = input.history.length
  const f = input.forecastStart
  const levels = ([95, 80] as const).filter((level) => input.forecast.some((p) => p.bands[level] !== undefined))
  const x = Array.from({ length: n }, (_, i) => i)
  const history: (number | null)[] = Array.from({ length: n }, (_, i) => (i < h ? input.history[i] ?? null : null))
  const forecast: (number | null)[] = Array.from({ length: n }, (_, i) => (i >= f ? input.forecast[i - f]?.demand ?? null : null))
  const bandColumns: (number | null)[][] = []
  for (const level of levels) {
    bandColumns.push(Array.from({ length: n }, (_, i) => (i >= f ? input.forecast[i - f]?.bands[level]?.high ?? null : null)))
    bandColumns.push(Array.from({ length: n }, (_, i) => (i >= f ? input.forecast[i - f]?.bands[level]?.low ?? null : null)))
  }
  const adjusted = input.forecast.some((p) => p.adjusted !== undefined && p.adjusted !== null)
  const adjustedColumn: (number | null)[] = Array.from({ length: n }, (_, i) => (i >= f ? input.forecast[i - f]?.adjusted ?? null : null))
  const past = (input.past ?? []).some((v) => v !== null)
  const pastColumn: (number | null)[] = Array.from({ length: n }, (_, i) => input.past?.[i] ?? null)
  const whatIf = (input.whatIf?.demand.length ?? 0) > 0
  const whatIfColumn: (number | null)[] = Array.from({ length: n }, (_, i) => (i >= f ? input.whatIf?.demand[i - f] ?? null : null))
  const data = [
    x,
    history,
    ...bandColumns,
    forecast,
    ...(adjusted ? [adjustedColumn] : []),
    ...(past ? [pastColumn] : []),
    ...(whatIf ? [whatIfColumn] : []),
  ] as uPlot.AlignedData
  return { data, levels, adjusted, past, whatIf, pastColumn, whatIfColumn }
}

/**
 * A marker path builder: `shape` adds one marker at (x, y) in canvas pixels to the path;
 * filled markers fill it, hollow ones stroke it only (uPlot draws circles by default).
 */
function markerPoints(shape: (path: Path2D, x: number, y: number) => void, filled: boolean): uPlot.Series.Points.PathBuilder {
  return (u, seriesIdx, idx0, idx1) => {
    const path = new Path2D()
    const values = u.data[seriesIdx]!
    for (let i = idx0; i <= idx1; i++) {
      const v = values[i]
      if (v === null || v === undefined) continue
      shape(path, u.valToPos(i, 'x', true), u.valToPos(v, 'y', true))
    }
    return { stroke: path, fill: filled ? path : new Path2D() }
  }
}

/** Filled squares: the adjusted forecast. */
const squarePoints = markerPoints((path, x, y) => {
  const size = 9 * uPlot.pxRatio
  path.rect(x - size / 2, y - size / 2, size, size)
}, true)

/** Hollow diamonds: past forecasts, told apart from the forecast's dots and the adjusted squares by shape. */
const diamondPoints = markerPoints((path, x, y) => {
  const r = 5.5 * uPlot.pxRatio
  path.moveTo(x, y - r)
  path.lineTo(x + r, y)
  path.lineTo(x, y + r)
  path.lineTo(x - r, y)
  path.closePath()
}, false)

/** Period steps that read well for weekly, monthly and quarterly labels. */
const PERIOD_STEPS = [1, 2, 3, 4, 6, 12, 13, 26, 52, 104, 156, 260, 520]

export function drawForecastChart(
  target: HTMLElement,
  input: ChartInput,
  width: number,
  events: { onCursor(index: number | null): void; onDrawn(summary: DrawnSummary): void },
): ForecastChart {
  const { data, levels, adjusted, past, whatIf, pastColumn, whatIfColumn } = columns(input)
  const f = input.forecastStart
  const holdoutStart = Math.max(0, f - input.holdoutPeriods)
  const bandSeries: uPlot.Series[] = []
  const bands: uPlot.Band[] = []
  levels.forEach((level, k) => {
    const edge = CHART_COLOURS.bandEdge[level]
    const dash = level === 95 ? [2, 3] : undefined
    bandSeries.push({ label: `${level}% high`, stroke: edge, width: 1, dash, points: { show: false } })
    bandSeries.push({ label: `${level}% low`, stroke: edge, width: 1, dash, points: { show: false } })
    bands.push({ series: [2 + 2 * k, 3 + 2 * k], fill: (u: uPlot) => bandFill(u.ctx, level) })
  })
  const forecastIndex = 2 + 2 * levels.length
  const adjustedIndex = forecastIndex + 1

  const drawDecor = (u: uPlot) => {
    const ctx = u.ctx
    const { top, height } = u.bbox
    ctx.save()
    if (input.holdoutPeriods > 0 && f > 0) {
      const x0 = u.valToPos(holdoutStart - 0.5, 'x', true)
      const x1 = u.valToPos(f - 0.5, 'x', true)
      ctx.fillStyle = CHART_COLOURS.holdout
      ctx.fillRect(x0, top, x1 - x0, height)
      ctx.fillStyle = CHART_COLOURS.holdoutText
      ctx.font = `${12 * uPlot.pxRatio}px system-ui, sans-serif`
      ctx.textBaseline = 'top'
      ctx.fillText('holdout', x0 + 4 * uPlot.pxRatio, top + 4 * uPlot.pxRatio)
    }
    if (input.forecast.length > 0) {
      const xf = u.valToPos(f - 0.5, 'x', true)
      ctx.strokeStyle = CHART_COLOURS.divider
      ctx.lineWidth = uPlot.pxRatio
      ctx.setLineDash([4 * uPlot.pxRatio, 4 * uPlot.pxRatio])
      ctx.beginPath()
      ctx.moveTo(xf, top)
      ctx.lineTo(xf, top + height)
      ctx.stroke()
      ctx.setLineDash([])
      ctx.fillStyle = CHART_COLOURS.holdoutText
      ctx.font = `${12 * uPlot.pxRatio}px system-ui, sans-serif`
      ctx.textBaseline = 'top'
      ctx.fillText('forecast', xf + 4 * uPlot.pxRatio, top + 4 * uPlot.pxRatio)
    }
    ctx.restore()
  }

  // Band labels at the right end, so the bands are named on the chart itself.
  const drawLabels = (u: uPlot) => {
    const last = data[0].length - 1
    if (input.forecast.length === 0) return
    const ctx = u.ctx
    ctx.save()
    ctx.font = `600 ${11 * uPlot.pxRatio}px system-ui, sans-serif`
    ctx.textAlign = 'right'
    ctx.textBaseline = 'bottom'
    ctx.fillStyle = CHART_COLOURS.labelText
    const xr = u.bbox.left + u.bbox.width - 3 * uPlot.pxRatio
    levels.forEach((level, k) => {
      const high = data[2 + 2 * k]![last]
      if (high === null || high === undefined) return
      ctx.fillText(`${level}%`, xr, u.valToPos(high, 'y', true) - 2 * uPlot.pxRatio)
    })
    // The adjusted forecast is named on the chart too, so its colour carries no meaning alone.
    const firstAdjusted = adjusted ? data[adjustedIndex]!.findIndex((v) => v !== null && v !== undefined) : -1
    if (firstAdjusted >= 0) {
      ctx.textAlign = 'left'
      ctx.fillStyle = CHART_COLOURS.adjusted
      const y = u.valToPos(data[adjustedIndex]![firstAdjusted]!, 'y', true)
      ctx.fillText('adjusted', u.valToPos(firstAdjusted, 'x', true) + 7 * uPlot.pxRatio, y - 6 * uPlot.pxRatio)
    }
    // So is the what-if line, at its last point.
    if (whatIf && input.whatIf) {
      const column = whatIfColumn
      const lastAt = column.findLastIndex((v) => v !== null)
      if (lastAt >= 0) {
        ctx.textAlign = 'right'
        ctx.fillStyle = CHART_COLOURS.whatIf
        ctx.fillText(`what-if: ${input.whatIf.label}`, u.valToPos(lastAt, 'x', true) - 8 * uPlot.pxRatio, u.valToPos(column[lastAt]!, 'y', true) + 16 * uPlot.pxRatio)
      }
    }
    ctx.restore()
  }

  const summarize = (u: uPlot): DrawnSummary => {
    const probes: DrawnProbe[] = []
    const px = (i: number) => Math.round(u.valToPos(i, 'x', true))
    const py = (value: number) => Math.round(u.valToPos(value, 'y', true))
    const at = (name: DrawnProbe['name'], i: number, value: number) => probes.push({ name, x: px(i), y: py(value) })
    const i80 = levels.indexOf(80)
    const i95 = levels.indexOf(95)
    // The forecast period where the 95%-only stretch above the 80% band is tallest on screen,
    // away from the plot's right edge and the band labels there when there is a choice.
    let best = -1
    let bestGap = 0
    const end = data[0].length - f >= 3 ? data[0].length - 1 : data[0].length
    for (let i = f; i < end; i++) {
      if (i80 < 0 || i95 < 0) break
      const hi80 = data[2 + 2 * i80]![i]
      const hi95 = data[2 + 2 * i95]![i]
      if (hi80 == null || hi95 == null) continue
      const gap = py(hi80) - py(hi95)
      if (gap > bestGap) {
        bestGap = gap
        best = i
      }
    }
    if (best >= 0) {
      const lo80 = data[3 + 2 * i80]![best]!
      const hi80 = data[2 + 2 * i80]![best]!
      const hi95 = data[2 + 2 * i95]![best]!
      at('band-80', best, lo80 + (hi80 - lo80) * 0.25)
      at('band-95', best, (hi80 + hi95) / 2)
      const yTop = py(hi95)
      const room = yTop - u.bbox.top
      if (room > 12 * uPlot.pxRatio) probes.push({ name: 'outside-bands', x: px(best), y: Math.round(u.bbox.top + room / 2) })
    }
    if (input.holdoutPeriods > 0 && f > 0) {
      // Near the foot of the plot, just right of the holdout's first period, clear of its label.
      probes.push({ name: 'holdout', x: px(holdoutStart - 0.25), y: Math.round(u.bbox.top + u.bbox.height - 4 * uPlot.pxRatio) })
    }
    const lastHistory = input.history.findLastIndex((v) => v !== null)
    if (lastHistory >= 0) at('history', lastHistory, input.history[lastHistory]!)
    const adjustedAt = adjusted ? data[adjustedIndex]!.findIndex((v) => v !== null && v !== undefined) : -1
    if (adjustedAt >= 0) at('adjusted', adjustedAt, data[adjustedIndex]![adjustedAt]!)
    // The past forecast whose marker stands furthest from the history line, so a probe finds its stroke.
    if (past) {
      let far = -1
      let farGap = -1
      pastColumn.forEach((v, i) => {
        const h = input.history[i]
        if (v === null || h === null || h === undefined) return
        const gap = Math.abs(py(v) - py(h))
        if (gap > farGap) {
          farGap = gap
          far = i
        }
      })
      if (far >= 0) probes.push({ name: 'past', x: px(far), y: py(pastColumn[far]!) - Math.round(5.5 * uPlot.pxRatio) })
    }
    if (whatIf) {
      const at0 = whatIfColumn.findIndex((v) => v !== null)
      if (at0 >= 0) at('what-if', at0, whatIfColumn[at0]!)
    }
    return {
      historyPoints: input.history.filter((v) => v !== null).length,
      forecastPoints: input.forecast.length,
      adjustedPoints: input.forecast.filter((p) => p.adjusted !== undefined && p.adjusted !== null).length,
      pastPoints: pastColumn.filter((v) => v !== null).length,
      whatIfPoints: whatIfColumn.filter((v) => v !== null).length,
      bands: levels.map((level) => ({ level, points: input.forecast.filter((p) => p.bands[level] !== undefined).length })),
      holdoutPeriods: Math.min(input.holdoutPeriods, f),
      probes,
    }
  }

  const opts: uPlot.Options = {
    width,
    height: HEIGHT,
    legend: { show: false },
    cursor: { drag: { x: false, y: false }, points: { size: 7 } },
    scales: { x: { time: false } },
    axes: [
      {
        stroke: CHART_COLOURS.axisText,
        grid: { stroke: CHART_COLOURS.grid, width: 1 },
        incrs: PERIOD_STEPS,
        space: 70,
        values: (_u, splits) => splits.map((i) => (Number.isInteger(i) ? input.periods[i] ?? '' : '')),
      },
      {
        stroke: CHART_COLOURS.axisText,
        grid: { stroke: CHART_COLOURS.grid, width: 1 },
        values: (_u, splits) => splits.map(compact),
        size: 56,
      },
    ],
    series: [
      {},
      { label: 'History', stroke: CHART_COLOURS.history, width: 2, points: { show: false }, spanGaps: false },
      ...bandSeries,
      {
        label: 'Forecast',
        stroke: CHART_COLOURS.forecast,
        width: 2,
        dash: [7, 4],
        points: { show: true, size: 5, stroke: CHART_COLOURS.forecast, fill: '#ffffff' },
      },
      ...(adjusted
        ? [
            {
              label: 'Adjusted forecast',
              stroke: CHART_COLOURS.adjusted,
              width: 2.5,
              spanGaps: false,
              // Filled squares, unlike the forecast's hollow dots: the shape tells them apart.
              points: { show: true, size: 11, width: 0, stroke: CHART_COLOURS.adjusted, fill: CHART_COLOURS.adjusted, paths: squarePoints },
            } satisfies uPlot.Series,
          ]
        : []),
      ...(past
        ? [
            {
              label: 'Past forecast',
              stroke: CHART_COLOURS.past,
              width: 2,
              paths: () => null,
              // Markers only: each is the forecast a period was scored against (its accuracy record).
              points: { show: true, size: 11, width: 2, stroke: CHART_COLOURS.past, fill: 'transparent', paths: diamondPoints },
            } satisfies uPlot.Series,
          ]
        : []),
      ...(whatIf
        ? [
            {
              label: 'What-if forecast',
              stroke: CHART_COLOURS.whatIf,
              width: 2,
              dash: [2, 3],
              points: { show: false },
            } satisfies uPlot.Series,
          ]
        : []),
    ],
    bands,
    hooks: {
      drawClear: [drawDecor],
      draw: [drawLabels, (u) => events.onDrawn(summarize(u))],
      setCursor: [(u) => events.onCursor(u.cursor.idx ?? null)],
    },
  }
  const plot = new uPlot(opts, data, target)
  let cursor = data[0].length - 1

  return {
    moveCursor(step) {
      const last = data[0].length - 1
      cursor = step === 'first' ? 0 : step === 'last' ? last : Math.min(last, Math.max(0, cursor + step))
      const value = data[1][cursor] ?? data[forecastIndex]![cursor] ?? 0
      plot.setCursor({ left: plot.valToPos(cursor, 'x'), top: plot.valToPos(value, 'y') })
      return cursor
    },
    resize(w) {
      plot.setSize({ width: w, height: HEIGHT })
    },
    destroy() {
      plot.destroy()
    },
  }
}
