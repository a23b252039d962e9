/**
 * The forms of the exponential smoothing state-space family (Hyndman, Koehler, Ord and
 * Snyder 2008, "Forecasting with Exponential Smoothing", Springer, tables 2.1 and 2.2)
 * that this engine fits: error additive or multiplicative, trend none, additive or
 * additive damped, season none, additive or multiplicative.
 *
 * Admissible here: every combination except additive error with a multiplicative season,
 * whose variance is numerically unstable (the same restriction as the authors' own
 * software by default; from memory). Multiplicative error or season needs positive data.
 */
export type ErrorKind = 'add' | 'mul'
export type TrendKind = 'none' | 'add' | 'damped'
export type SeasonKind = 'none' | 'add' | 'mul'

export interface StateSpaceForm {
  readonly error: ErrorKind
  readonly trend: TrendKind
  readonly season: SeasonKind
}

/** The taxonomy's short name, e.g. `M,Ad,M` for multiplicative error, damped trend, multiplicative season. */
export function formName(form: StateSpaceForm): string {
  const e = form.error === 'add' ? 'A' : 'M'
  const t = form.trend === 'none' ? 'N' : form.trend === 'add' ? 'A' : 'Ad'
  const s = form.season === 'none' ? 'N' : form.season === 'add' ? 'A' : 'M'
  return `${e},${t},${s}`
}

/** Admissible forms for a season length (no seasonal forms when m < 2). */
export function admissibleForms(seasonLength: number, positive: boolean): StateSpaceForm[] {
  const out: StateSpaceForm[] = []
  const seasons: SeasonKind[] = seasonLength >= 2 ? ['none', 'add', 'mul'] : ['none']
  for (const error of ['add', 'mul'] as const) {
    if (error === 'mul' && !positive) continue
    for (const trend of ['none', 'add', 'damped'] as const) {
      for (const season of seasons) {
        if (season === 'mul' && (error === 'add' || !positive)) continue
        out.push({ error, trend, season })
      }
    }
  }
  return out
}

/**
 * Free parameters counted by AICc: smoothing weights, damping, initial level, initial
 * trend, m - 1 initial seasonal states (one is fixed by normalisation), plus the error
 * variance (HKOS 2008, section 5.1 counts; from memory).
 */
export function freeParameterCount(form: StateSpaceForm, seasonLength: number): number {
  let k = 2 // alpha, initial level
  if (form.trend !== 'none') k += 2
  if (form.trend === 'damped') k += 1
  if (form.season !== 'none') k += 1 + (seasonLength - 1)
  return k + 1
}
