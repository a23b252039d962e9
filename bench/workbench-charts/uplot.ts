// The workbench's own chart (uPlot with its band fills and patterns).
import { drawForecastChart } from '../../web/src/chart/forecast-chart'
import { chartData } from './data'

const d = chartData()
;(window as unknown as { draw: (el: HTMLElement) => () => void }).draw = (el) => {
  const chart = drawForecastChart(
    el,
    {
      periods: d.labels,
      history: d.history.slice(0, 520),
      forecastStart: 520,
      forecast: d.forecast.slice(520).map((v, i) => ({
        demand: v!,
        bands: { 80: { low: d.lo80[520 + i]!, high: d.hi80[520 + i]! }, 95: { low: d.lo95[520 + i]!, high: d.hi95[520 + i]! } },
      })),
      holdoutPeriods: 52,
    },
    1000,
    { onCursor: () => undefined, onDrawn: () => undefined },
  )
  return () => chart.destroy()
}
