/**
 * Demand classification of Syntetos, Boylan and Croston (2005), "On the
 * categorization of demand patterns", J. Oper. Res. Soc. 56(5): cut-offs
 * ADI = 1.32 and CV^2 = 0.49.
 *   ADI <= 1.32, CV^2 <= 0.49  smooth       ADI <= 1.32, CV^2 > 0.49  erratic
 *   ADI >  1.32, CV^2 <= 0.49  intermittent ADI >  1.32, CV^2 > 0.49  lumpy
 * Values exactly on a cut-off fall on the smooth side.
 *
 * ADI: the mean of the inter-demand intervals as Croston's method sees them (the
 * first counted from just before the series start), i.e. (1-based position of the
 * last demand) / (number of demands); trailing zeros are an unfinished interval
 * and do not count. CV^2: squared coefficient of variation of the non-zero sizes,
 * population variance / mean^2. (Both definitions are common practice; texts vary.)
 */
import { EngineInputError } from '../errors.js'
import { checkNonNegative, checkSeries } from '../trend/guards.js'

export const ADI_CUTOFF = 1.32
export const CV2_CUTOFF = 0.49

export type DemandClass = 'smooth' | 'erratic' | 'intermittent' | 'lumpy'

export interface DemandClassification {
  readonly adi: number
  readonly cv2: number
  readonly demands: number
  readonly demandClass: DemandClass
}

/** @throws EngineInputError on bad values or fewer than 2 non-zero demands. */
export function classifyDemand(series: readonly number[]): DemandClassification {
  checkSeries(series, 'demand classification', 1)
  checkNonNegative(series, 'demand classification')
  let demands = 0
  let last = -1
  let total = 0
  for (let t = 0; t < series.length; t++) {
    if (series[t]! > 0) {
      demands++
      last = t
      total += series[t]!
    }
  }
  if (demands < 2) {
    throw new EngineInputError('series-too-short', `demand classification needs 2 periods with demand, has ${demands}`)
  }
  const mean = total / demands
  // Sum of (x / mean - 1)^2: the same ratio as variance / mean^2, but scale-free,
  // so tiny sizes (mean^2 underflowing to 0) cannot make it 0 / 0 = NaN.
  let ss = 0
  for (let t = 0; t < series.length; t++) {
    if (series[t]! > 0) ss += (series[t]! / mean - 1) * (series[t]! / mean - 1)
  }
  const cv2 = ss / demands
  const adi = (last + 1) / demands
  const intermittentSide = adi > ADI_CUTOFF
  const variableSide = cv2 > CV2_CUTOFF
  const demandClass: DemandClass = intermittentSide
    ? variableSide ? 'lumpy' : 'intermittent'
    : variableSide ? 'erratic' : 'smooth'
  return { adi, cv2, demands, demandClass }
}
