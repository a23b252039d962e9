/**
 * Exact Gaussian likelihood of a zero-mean ARMA process by the Kalman filter, in the
 * state-space form of Harvey (1989, "Forecasting, structural time series models and the
 * Kalman filter", section 3.3; as used by R's arima and statsmodels SARIMAX):
 *   state dimension r = max(p, q + 1),  w_t = Z alpha_t,  alpha_{t+1} = T alpha_t + R eps_t,
 *   T = companion matrix with a_1..a_r in its first column, R = (1, b_1, ..., b_{r-1})', Z = e_1,
 * started at the stationary distribution, P_1 solving P = T P T' + R R' (found by the
 * doubling iteration P <- P + A P A', A <- A^2). The filter runs with sigma^2 = 1 and
 * sigma^2 is concentrated out:
 *   sigma^2 = (1/n) sum v_t^2 / F_t,   log L = -n/2 (log(2 pi sigma^2) + 1) - 1/2 sum log F_t
 * (Harvey 1989, section 3.4). O(n r^2) for the filter, O(r^3 log) for P_1.
 */

export interface ArmaRun {
  /** Concentrated log-likelihood; -Infinity when the filter breaks down. */
  readonly logLikelihood: number
  readonly sigma2: number
  /** sum v_t^2 / F_t and sum log F_t (for the likelihood at a given sigma^2). */
  readonly scaledSquares: number
  readonly sumLogF: number
  /** Predicted state alpha_{n+1} (for forecasts). */
  readonly nextState: number[]
}

/** r x r matrices as flat row-major arrays. out = X Y (out must not alias X or Y). */
function multiply(out: Float64Array, X: Float64Array, Y: Float64Array, r: number): void {
  out.fill(0)
  for (let i = 0; i < r; i++) {
    for (let k = 0; k < r; k++) {
      const x = X[i * r + k]!
      if (x === 0) continue
      for (let j = 0; j < r; j++) out[i * r + j]! += x * Y[k * r + j]!
    }
  }
}

function transposeInto(out: Float64Array, X: Float64Array, r: number): void {
  for (let i = 0; i < r; i++) for (let j = 0; j < r; j++) out[j * r + i] = X[i * r + j]!
}

function stationaryCovariance(ar: Float64Array, R: Float64Array, r: number): Float64Array | null {
  const P = new Float64Array(r * r)
  for (let i = 0; i < r; i++) for (let j = 0; j < r; j++) P[i * r + j] = R[i]! * R[j]!
  let A: Float64Array = new Float64Array(r * r)
  for (let i = 0; i < r; i++) {
    A[i * r] = ar[i]!
    if (i + 1 < r) A[i * r + i + 1] = 1
  }
  const AP = new Float64Array(r * r)
  const At = new Float64Array(r * r)
  const add = new Float64Array(r * r)
  let AA: Float64Array = new Float64Array(r * r)
  for (let iter = 0; iter < 60; iter++) {
    multiply(AP, A, P, r)
    transposeInto(At, A, r)
    multiply(add, AP, At, r)
    let change = 0
    let size = 0
    for (let i = 0; i < r * r; i++) {
      const v = add[i]!
      if (Math.abs(v) > change) change = Math.abs(v)
      P[i]! += v
      if (Math.abs(P[i]!) > size) size = Math.abs(P[i]!)
    }
    if (!Number.isFinite(change) || !Number.isFinite(size)) return null
    if (change <= 1e-13 * size) return P
    multiply(AA, A, A, r)
    const swap = A
    A = AA
    AA = swap
  }
  return null
}

/**
 * Runs the filter on w (zero mean). a: expanded AR coefficients, b: expanded MA coefficients.
 * Writes the one-step predictions of w into `predictions` when given. Once P stops changing
 * (steady state, as R's arima also exploits) its update is skipped.
 */
export function runArma(w: readonly number[], a: readonly number[], b: readonly number[], predictions?: number[]): ArmaRun {
  const n = w.length
  const r = Math.max(a.length, b.length + 1, 1)
  const bad: ArmaRun = { logLikelihood: -Infinity, sigma2: NaN, scaledSquares: NaN, sumLogF: NaN, nextState: [] }
  const ar = new Float64Array(r)
  for (let i = 0; i < a.length; i++) ar[i] = a[i]!
  const R = new Float64Array(r)
  R[0] = 1
  for (let j = 1; j < r; j++) R[j] = j <= b.length ? b[j - 1]! : 0
  const P0 = stationaryCovariance(ar, R, r)
  if (P0 === null) return bad
  let P: Float64Array = P0
  let Pn: Float64Array = new Float64Array(r * r)
  const M = new Float64Array(r * r)
  let state: Float64Array = new Float64Array(r)
  let next: Float64Array = new Float64Array(r)
  const col = new Float64Array(r)
  let steady = false
  let ssq = 0
  let sumLogF = 0
  for (let t = 0; t < n; t++) {
    const F = P[0]!
    if (!(F > 0)) return bad
    if (predictions) predictions[t] = state[0]!
    const v = w[t]! - state[0]!
    ssq += (v * v) / F
    sumLogF += Math.log(F)
    for (let i = 0; i < r; i++) col[i] = P[i * r]!
    // updated state a + P e1 v / F, then predicted: (T x)_i = ar_i x_0 + x_{i+1}
    const x0 = state[0]! + (col[0]! * v) / F
    for (let i = 0; i < r; i++) {
      const xi1 = i + 1 < r ? state[i + 1]! + (col[i + 1]! * v) / F : 0
      next[i] = ar[i]! * x0 + xi1
    }
    const swapState = state
    state = next
    next = swapState
    if (steady) continue
    // P <- T (P - P e1 e1' P / F) T' + R R'
    for (let i = 0; i < r; i++) {
      for (let j = 0; j < r; j++) {
        const u0j = P[j]! - (col[0]! * col[j]!) / F
        const ui1j = i + 1 < r ? P[(i + 1) * r + j]! - (col[i + 1]! * col[j]!) / F : 0
        M[i * r + j] = ar[i]! * u0j + ui1j
      }
    }
    let change = 0
    for (let i = 0; i < r; i++) {
      for (let j = 0; j < r; j++) {
        const v2 = ar[j]! * M[i * r]! + (j + 1 < r ? M[i * r + j + 1]! : 0) + R[i]! * R[j]!
        Pn[i * r + j] = v2
        const diff = Math.abs(v2 - P[i * r + j]!)
        if (diff > change) change = diff
      }
    }
    const swap = P
    P = Pn
    Pn = swap
    if (change <= 1e-12 * P[0]!) steady = true
  }
  const sigma2 = ssq / n
  const logLikelihood = (-n / 2) * (Math.log(2 * Math.PI * Math.max(sigma2, 1e-300)) + 1) - sumLogF / 2
  return { logLikelihood: Number.isFinite(logLikelihood) ? logLikelihood : -Infinity, sigma2, scaledSquares: ssq, sumLogF, nextState: Array.from(state) }
}

/** Log-likelihood at a given innovation variance (not concentrated), as statsmodels reports it. */
export function logLikelihoodAt(run: ArmaRun, n: number, sigma2: number): number {
  return (-n / 2) * Math.log(2 * Math.PI * sigma2) - run.sumLogF / 2 - run.scaledSquares / (2 * sigma2)
}

/** Forecasts of w for steps 1..horizon from the predicted state: (T^{h-1} alpha_{n+1})_1. */
export function armaForecast(run: ArmaRun, a: readonly number[], horizon: number): number[] {
  let state = run.nextState.slice()
  const r = state.length
  const out: number[] = []
  for (let h = 1; h <= horizon; h++) {
    out.push(state[0]!)
    const next = new Array<number>(r)
    for (let i = 0; i < r; i++) next[i] = (i < a.length ? a[i]! : 0) * state[0]! + (i + 1 < r ? state[i + 1]! : 0)
    state = next
  }
  return out
}
