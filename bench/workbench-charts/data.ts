/** 520 weekly periods of history and 52 forecast periods with 80% and 95% bands (invented, seeded). */
export interface ChartData {
  readonly labels: string[]
  readonly history: (number | null)[]
  readonly forecast: (number | null)[]
  readonly lo95: (number | null)[]
  readonly hi95: (number | null)[]
  readonly lo80: (number | null)[]
  readonly hi80: (number | null)[]
}

export function chartData(historyLength = 520, horizon = 52): ChartData {
  let seed = 7
  const random = () => ((seed = (seed * 16807) % 2147483647) / 2147483647)
  const n = historyLength + horizon
  const labels: string[] = []
  const history: (number | null)[] = []
  const forecast: (number | null)[] = []
  const lo95: (number | null)[] = []
  const hi95: (number | null)[] = []
  const lo80: (number | null)[] = []
  const hi80: (number | null)[] = []
  for (let i = 0; i < n; i++) {
    labels.push(`${2016 + Math.floor(i / 52)}-W${String((i % 52) + 1).padStart(2, '0')}`)
    const season = 100 + 40 * Math.sin((2 * Math.PI * i) / 52)
    if (i < historyLength) {
      history.push(Math.round(season + 15 * (random() - 0.5)))
      for (const column of [forecast, lo95, hi95, lo80, hi80]) column.push(null)
    } else {
      const spread = 8 + 0.3 * (i - historyLength)
      history.push(null)
      forecast.push(season)
      lo95.push(season - 1.96 * spread)
      hi95.push(season + 1.96 * spread)
      lo80.push(season - 1.28 * spread)
      hi80.push(season + 1.28 * spread)
    }
  }
  return { labels, history, forecast, lo95, hi95, lo80, hi80 }
}
