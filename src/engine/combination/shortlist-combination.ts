/**
 * 'shortlist-combination': the equal-weight mean of the shortlist, the (up to three)
 * candidates with the best holdout scores, each refitted on the whole history
 * (select/shortlist.ts). It is not a fitter of its own kind: selection forms it from
 * the shortlist's members and offers it as one more candidate (select/forecast-series.ts).
 *
 * Point forecast at step h:   f_h = (1 / K) sum_k f_{k,h}   over the K members.
 * Fitted values:               the mean of the members' one-step fitted values, where
 *                              every member has one.
 * Intervals:                   no variance of its own; the AICc pick's calibrated bands,
 *                              centred on the mean (select/forecast-series.ts,
 *                              combinedWinner, which says why).
 *
 * Why the mean of a few good models: combining forecasts of different models is more
 * accurate on average than picking one, because the pick is made on a short, noisy
 * holdout (Bates & Granger 1969, Oper. Res. Q. 20; the M3 and M4 competitions,
 * Makridakis & Hibon 2000, Makridakis, Spiliotis & Assimakopoulos 2020); pooling the
 * best few rather than all candidates, Kourentzes, Barrow & Petropoulos 2019, IJPE 209;
 * equal weights because estimated weights rarely beat them (the "forecast combination
 * puzzle", Smith & Wallis 2009, Oxford Bull. Econ. Stat. 71). All cited from memory.
 */
import { EngineInputError } from '../errors.js'
import { checkFinite, checkHorizon } from '../trend/guards.js'
import type { ModelFamily, ModelFit, ModelName } from '../types.js'

export const SHORTLIST_COMBINATION: ModelName = 'shortlist-combination'
export const COMBINATION_FAMILY: ModelFamily = 'combination'

/** Step means of the members' forecasts (all the same length). */
export function meanForecast(each: readonly (readonly number[])[]): number[] {
  const length = each[0]?.length ?? 0
  const out = new Array<number>(length)
  for (let h = 0; h < length; h++) {
    let s = 0
    for (const f of each) s += f[h]!
    out[h] = s / each.length
  }
  return out
}

/**
 * The combination of fits already made on `series`: fitted values the members' mean where
 * every member has one (NaN elsewhere), forecasts the members' mean. No variance formula:
 * the bands come from the pick (see the module comment).
 * @throws EngineInputError with fewer than two members
 */
export function combineFits(fits: readonly ModelFit[], series: readonly number[]): ModelFit {
  if (fits.length < 2) throw new EngineInputError('invalid-option', `${SHORTLIST_COMBINATION} needs at least two members`)
  const fitted = new Array<number>(series.length)
  for (let t = 0; t < series.length; t++) {
    let s = 0
    for (const f of fits) s += f.fitted[t] ?? NaN
    fitted[t] = Number.isFinite(s) ? s / fits.length : NaN
  }
  return {
    model: SHORTLIST_COMBINATION,
    params: { memberCount: fits.length },
    fitted,
    forecast(horizon: number): number[] {
      checkHorizon(horizon)
      const out = meanForecast(fits.map((f) => f.forecast(horizon)))
      checkFinite(out, SHORTLIST_COMBINATION)
      return out
    },
  }
}
