/**
 * Starting values for maximum likelihood, after the heuristic of Hyndman, Koehler, Ord
 * and Snyder (2008, section 2.6.1; from memory): seasonal states from a classical
 * decomposition of the first years (at most three seasons), then level and trend from
 * a least-squares line through the first seasonally adjusted values (at least ten,
 * at least two seasons).
 */
import { decomposeClassical } from '../seasonal/decompose.js'
import type { StateSpaceForm } from './forms.js'
import type { InitialStates } from './filter.js'

export function heuristicStates(form: StateSpaceForm, series: readonly number[], m: number): InitialStates {
  const n = series.length
  let season: number[] = []
  if (form.season !== 'none') {
    const head = series.slice(0, Math.min(n, 3 * m))
    season = decomposeClassical(head, m, form.season === 'mul' ? 'multiplicative' : 'additive').figure.slice()
  }
  const k = Math.min(n, Math.max(10, 2 * m))
  const adjusted = new Array<number>(k)
  for (let t = 0; t < k; t++) {
    const y = series[t]!
    adjusted[t] = form.season === 'add' ? y - season[t % m]! : form.season === 'mul' ? y / season[t % m]! : y
  }
  let meanT = 0
  let meanY = 0
  for (let t = 0; t < k; t++) {
    meanT += t
    meanY += adjusted[t]!
  }
  meanT /= k
  meanY /= k
  if (form.trend === 'none') return { level: meanY, trend: 0, season }
  let sxy = 0
  let sxx = 0
  for (let t = 0; t < k; t++) {
    sxy += (t - meanT) * (adjusted[t]! - meanY)
    sxx += (t - meanT) * (t - meanT)
  }
  const slope = sxx > 0 ? sxy / sxx : 0
  // The line's value one step before the first observation: the filter's l_0.
  const level = meanY - slope * (meanT + 1)
  return { level, trend: slope, season }
}
