/**
 * Analytical h-step forecast-error variances of the additive-error ETS models
 * (class 1 of Hyndman, Koehler, Ord and Snyder 2008, ch. 6, Table 6.1; cited
 * from memory):
 *   v_h = sigma^2 * (1 + sum_{j=1}^{h-1} c_j^2),
 *   c_j = alpha + betaE * phi_j + gamma * [j mod m = 0],  phi_j = phi + ... + phi^j,
 * covering ANN (betaE = gamma = 0), AAN (phi = 1), AAdN, ANA, AAA and AAdA.
 * betaE is their error-correction trend weight, alpha * beta in our component form.
 */
export interface VarianceShape {
  readonly alpha: number
  /** Component-form trend smoothing (0 when there is no trend). */
  readonly beta: number
  readonly gamma: number
  readonly phi: number
  /** Season length; 1 or less for no seasonality. */
  readonly seasonLength: number
}

/** Variances for steps 1..horizon; sigma2 is the one-step error variance. */
export function additiveErrorVariance(shape: VarianceShape, sigma2: number, horizon: number): number[] {
  const count = Math.max(0, Math.floor(horizon))
  const out = new Array<number>(count)
  const betaE = shape.alpha * shape.beta
  const m = shape.seasonLength
  const s2 = Number.isFinite(sigma2) && sigma2 > 0 ? sigma2 : 0
  let acc = 1
  let phiJ = 0
  let pow = 1
  for (let h = 1; h <= count; h++) {
    out[h - 1] = s2 * acc
    // add c_h^2 for the next step
    pow *= shape.phi
    phiJ += pow
    const c = shape.alpha + betaE * phiJ + (m > 1 && h % m === 0 ? shape.gamma : 0)
    acc += c * c
  }
  return out
}
