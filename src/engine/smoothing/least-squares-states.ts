/**
 * Least-squares initial states for the additive models (Holt, damped Holt, additive
 * Holt-Winters). With the smoothing parameters fixed, every one-step error is an affine
 * function of the initial state vector x0 (the linear innovations state-space form,
 * Hyndman, Koehler, Ord and Snyder 2008, ch. 3; from memory), so the x0 that minimises
 * the SSE solves a small linear least-squares problem:
 *   e(x0) = e(0) + J x0,  J[:, i] = errors of the recursion run on y = 0 from x0 = unit i.
 * Unknowns: level, trend (if any), s_0..s_{m-2}; s_{m-1} = -(s_0 + ... + s_{m-2}) keeps
 * the seasonal states summing to zero (otherwise level and seasonal are not identified).
 * Normal equations solved by Cholesky with a tiny ridge. Allocation-free: the caller passes
 * a workspace of `leastSquaresWorkspace(n, m)` doubles (a Float64Array longer than 8
 * elements costs V8 an off-heap allocation, which dominated this step).
 */

/** Errors of the additive recursion (error-correction form) written into `out`. */
function errors(
  y: Float64Array | null,
  n: number,
  alpha: number,
  beta: number,
  gamma: number,
  phi: number,
  level: number,
  trend: number,
  s: Float64Array,
  out: Float64Array,
  offset: number,
): void {
  const m = s.length
  let l = level
  let pb = phi * trend
  let j = 0
  const k = phi * alpha * beta
  for (let t = 0; t < n; t++) {
    const sj = m > 0 ? s[j] : 0
    const e = (y ? y[t] : 0) - l - pb - sj
    out[offset + t] = e
    l = l + pb + alpha * e
    pb = phi * pb + k * e
    if (m > 0) {
      s[j] = sj + gamma * e
      if (++j === m) j = 0
    }
  }
}

/** Doubles of workspace `leastSquaresStates` needs for n points and season length m (0 or 1: none). */
export function leastSquaresWorkspace(n: number, m: number): number {
  const ms = m > 1 ? m : 0
  const p = 2 + (ms > 0 ? ms - 1 : 0)
  return (p + 2) * n + p * p + p + ms
}

/**
 * Writes the SSE-minimising initial states for these parameters into `out`
 * as [level, trend, s_0, ..., s_{m-1}].
 * @param m season length, or 1 for no seasonality
 * @returns false (and `out` untouched) when the problem is singular or too small
 */
export function leastSquaresStates(
  y: Float64Array,
  alpha: number,
  beta: number,
  gamma: number,
  phi: number,
  hasTrend: boolean,
  m: number,
  work: Float64Array,
  out: Float64Array,
): boolean {
  const n = y.length
  const ms = m > 1 ? m : 0
  const p = 1 + (hasTrend ? 1 : 0) + (ms > 0 ? ms - 1 : 0)
  if (n <= p) return false
  // Workspace layout: columns (p + 1) * n | r: n | a: p * p | rhs: p | s: ms.
  const cols = work
  const rAt = (p + 1) * n
  const aAt = rAt + n
  const rhsAt = aAt + p * p
  const sAt = rhsAt + p
  const s = work.subarray(sAt, sAt + ms)
  // Column p: the data with x0 = 0. Level and trend columns: unit starts on y = 0.
  s.fill(0)
  errors(y, n, alpha, beta, gamma, phi, 0, 0, s, cols, p * n)
  s.fill(0)
  errors(null, n, alpha, beta, gamma, phi, 1, 0, s, cols, 0)
  const first = 1 + (hasTrend ? 1 : 0)
  if (hasTrend) {
    s.fill(0)
    errors(null, n, alpha, beta, gamma, phi, 0, 1, s, cols, n)
  }
  if (ms > 0) {
    // The system is time-invariant and all states start at zero, so the response to a
    // unit s_j is the response r to a unit s_0 delayed by j steps. Column for unknown
    // s_j (j < m - 1): r delayed j minus r delayed m - 1 (the sum-to-zero substitution).
    s.fill(0)
    s[0] = 1
    errors(null, n, alpha, beta, gamma, phi, 0, 0, s, work, rAt)
    const last = ms - 1
    for (let j = 0; j < last; j++) {
      const c = (first + j) * n
      for (let t = 0; t < n; t++) {
        cols[c + t] = (t >= j ? work[rAt + t - j] : 0) - (t >= last ? work[rAt + t - last] : 0)
      }
    }
  }
  // Normal equations A x = -J' e(0), lower triangle of A.
  for (let i = 0; i < p; i++) {
    const ci = i * n
    for (let k = 0; k <= i; k++) {
      const ck = k * n
      let acc = 0
      for (let t = 0; t < n; t++) acc += cols[ci + t] * cols[ck + t]
      work[aAt + i * p + k] = acc
    }
    let r = 0
    for (let t = 0; t < n; t++) r += cols[ci + t] * cols[p * n + t]
    work[rhsAt + i] = -r
  }
  let trace = 0
  for (let i = 0; i < p; i++) trace += work[aAt + i * p + i]
  const ridge = 1e-10 * (trace / p) + 1e-300
  for (let i = 0; i < p; i++) work[aAt + i * p + i] += ridge
  // Cholesky (lower triangle in place), then two triangular solves.
  for (let i = 0; i < p; i++) {
    for (let k = 0; k <= i; k++) {
      let v = work[aAt + i * p + k]
      for (let q = 0; q < k; q++) v -= work[aAt + i * p + q] * work[aAt + k * p + q]
      if (i === k) {
        if (!(v > 0)) return false
        work[aAt + i * p + i] = Math.sqrt(v)
      } else work[aAt + i * p + k] = v / work[aAt + k * p + k]
    }
  }
  for (let i = 0; i < p; i++) {
    let v = work[rhsAt + i]
    for (let q = 0; q < i; q++) v -= work[aAt + i * p + q] * work[rhsAt + q]
    work[rhsAt + i] = v / work[aAt + i * p + i]
  }
  for (let i = p - 1; i >= 0; i--) {
    let v = work[rhsAt + i]
    for (let q = i + 1; q < p; q++) v -= work[aAt + q * p + i] * work[rhsAt + q]
    work[rhsAt + i] = v / work[aAt + i * p + i]
  }
  for (let i = 0; i < p; i++) if (!Number.isFinite(work[rhsAt + i])) return false
  out[0] = work[rhsAt]
  out[1] = hasTrend ? work[rhsAt + 1] : 0
  let sum = 0
  for (let j = 0; j + 1 < ms; j++) {
    const v = work[rhsAt + first + j]
    out[2 + j] = v
    sum += v
  }
  if (ms > 0) out[2 + ms - 1] = -sum
  return true
}
