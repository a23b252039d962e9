// Chart.js line chart: bands as filled datasets (fill to the next dataset), animation off.
import { CategoryScale, Chart, Filler, LineController, LineElement, LinearScale, PointElement } from 'chart.js'
import { chartData } from './data'

Chart.register(LineController, LineElement, PointElement, LinearScale, CategoryScale, Filler)
const d = chartData()
;(window as unknown as { draw: (el: HTMLElement) => () => void }).draw = (el) => {
  const canvas = document.createElement('canvas')
  el.appendChild(canvas)
  const line = (data: (number | null)[], extra: object) => ({ data, pointRadius: 0, borderWidth: 1, spanGaps: false, ...extra })
  const chart = new Chart(canvas, {
    type: 'line',
    data: {
      labels: d.labels,
      datasets: [
        line(d.hi95, { fill: '+1', backgroundColor: 'rgba(201,130,74,0.2)' }),
        line(d.lo95, {}),
        line(d.hi80, { fill: '+1', backgroundColor: 'rgba(240,191,148,0.8)' }),
        line(d.lo80, {}),
        line(d.history, { borderWidth: 2 }),
        line(d.forecast, { borderWidth: 2, borderDash: [6, 3] }),
      ],
    },
    options: { animation: false, responsive: false, normalized: true, plugins: {}, scales: { x: { type: 'category' } } },
  })
  chart.resize(1000, 340)
  return () => {
    chart.destroy()
    canvas.remove()
  }
}
