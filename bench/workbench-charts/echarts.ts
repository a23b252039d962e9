// ECharts (tree-shaken core: line series, grid, canvas renderer): bands as stacked areas.
import { LineChart } from 'echarts/charts'
import { GridComponent } from 'echarts/components'
import * as echarts from 'echarts/core'
import { CanvasRenderer } from 'echarts/renderers'
import { chartData } from './data'

echarts.use([LineChart, GridComponent, CanvasRenderer])
const d = chartData()
const diff = (hi: (number | null)[], lo: (number | null)[]) => hi.map((v, i) => (v === null ? null : v - lo[i]!))
;(window as unknown as { draw: (el: HTMLElement) => () => void }).draw = (el) => {
  const box = document.createElement('div')
  box.style.width = '1000px'
  box.style.height = '340px'
  el.appendChild(box)
  const chart = echarts.init(box, undefined, { renderer: 'canvas' })
  const band = (stack: string, base: (number | null)[], size: (number | null)[], colour: string) => [
    { type: 'line' as const, data: base, stack, symbol: 'none', lineStyle: { opacity: 0 } },
    { type: 'line' as const, data: size, stack, symbol: 'none', lineStyle: { opacity: 0 }, areaStyle: { color: colour } },
  ]
  chart.setOption({
    animation: false,
    xAxis: { type: 'category', data: d.labels },
    yAxis: { type: 'value' },
    series: [
      ...band('b95', d.lo95, diff(d.hi95, d.lo95), 'rgba(201,130,74,0.2)'),
      ...band('b80', d.lo80, diff(d.hi80, d.lo80), 'rgba(240,191,148,0.8)'),
      { type: 'line', data: d.history, symbol: 'none' },
      { type: 'line', data: d.forecast, symbol: 'none', lineStyle: { type: 'dashed' } },
    ],
  })
  return () => {
    chart.dispose()
    box.remove()
  }
}
