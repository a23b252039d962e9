/**
 * Least-squares initial states for the additive models (Holt, damped Holt, additive
 * Holt-Winters). With the smoothing parameters fixed, every one-step error is an affine
 * function of the initial state vector x0 (the linear innovations state-space form,
 * Hyndman, Koehler, Ord and Snyder 2008, ch. 3; from memory), so the x0 that minimises
 * the SSE solves a small linear least-squares problem:
 *   e(x0) = e(0) + J x0,  J[:, i] = errors of the recursion run on y = 0 from x0 = unit i.
 * Valid only for the additive recursions; multiplicative seasonality is not linear in x0.
 * Unknowns: level, trend (if any), s_0..s_{m-2}; s_{m-1} = -(s_0 + ... + s_{m-2}) keeps
 * the seasonal states summing to zero (otherwise level and seasonal are not identified).
 * Normal equations solved by Cholesky with a tiny ridge (1e-10 of the mean diagonal).
 * Allocation-free: the caller passes
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
    const sj = m > 0 ? s[j]! : 0
    const e = (y ? y[t]! : 0) - l - pb - sj
    out[offset + t] = e
    l = l + pb + alpha * e
    pb = phi * pb + k * e
    if (m > 0) {
      s[j] = sj + gamma * e
      if (++j === m) j = 0
    }
  }
}

/** <R_j, R_k> from the lagged sums P (see leastSquaresStates). */
function lagged(work: Float64Array, pAt: number, ms: number, j: number, k: number): number {
  return work[pAt + Math.abs(j - k) * ms + Math.max(j, k)]!
}

/** Doubles of workspace `leastSquaresStates` needs for n points and season length m (0 or 1: none). */
export function leastSquaresWorkspace(n: number, m: number): number {
  const ms = m > 1 ? m : 0
  const p = 2 + (ms > 0 ? ms - 1 : 0)
  return 4 * n + ms * ms + 3 * ms + p * p + p + ms
}

/**
 * Writes the SSE-minimising initial states for these parameters into `out`
 * as [level, trend, s_0, ..., s_{m-1}].
 *
 * The seasonal columns are built from one response r (to a unit s_0 on y = 0):
 * the system is time-invariant and starts at rest, so a unit s_j gives r delayed by j
 * steps, R_j. The column of unknown s_j (j < m - 1) is R_j - R_{m-1} (the sum-to-zero
 * substitution), and every inner product reduces to lagged sums of r:
 *   <R_j, R_k> = sum_{u=0}^{n-1-max(j,k)} r[u] r[u + |j-k|],  <R_j, v> = sum_{t>=j} r[t-j] v[t].
 * That is about m n + 3 m n products instead of (m + 1)^2 n / 2 for the full Gram matrix.
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
  const first = 1 + (hasTrend ? 1 : 0)
  const p = first + (ms > 0 ? ms - 1 : 0)
  if (n <= p || n < ms) return false
  // Workspace layout: E | L | T | r (n each) | P (ms * ms) | X (3 * ms) | a (p * p) | rhs (p) | s (ms).
  const eAt = 0
  const lAt = n
  const tAt = 2 * n
  const rAt = 3 * n
  const pAt = 4 * n
  const xAt = pAt + ms * ms
  const aAt = xAt + 3 * ms
  const rhsAt = aAt + p * p
  const sAt = rhsAt + p
  const s = work.subarray(sAt, sAt + ms)
  s.fill(0)
  errors(y, n, alpha, beta, gamma, phi, 0, 0, s, work, eAt)
  s.fill(0)
  errors(null, n, alpha, beta, gamma, phi, 1, 0, s, work, lAt)
  if (hasTrend) {
    s.fill(0)
    errors(null, n, alpha, beta, gamma, phi, 0, 1, s, work, tAt)
  }
  // Level and trend block, and their right-hand sides: A x = -J' e(0).
  let ll = 0
  let le = 0
  let lt = 0
  let tt = 0
  let te = 0
  for (let t = 0; t < n; t++) {
    const l = work[lAt + t]!
    const e = work[eAt + t]!
    ll += l * l
    le += l * e
    if (hasTrend) {
      const tr = work[tAt + t]!
      lt += l * tr
      tt += tr * tr
      te += tr * e
    }
  }
  work[aAt] = ll
  work[rhsAt] = -le
  if (hasTrend) {
    work[aAt + p] = lt
    work[aAt + p + 1] = tt
    work[rhsAt + 1] = -te
  }
  if (ms > 0) {
    s.fill(0)
    s[0] = 1
    errors(null, n, alpha, beta, gamma, phi, 0, 0, s, work, rAt)
    const last = ms - 1
    // P[c][q] = sum_{u=0}^{n-1-q} r[u] r[u+c] for c <= q < ms.
    for (let c = 0; c < ms; c++) {
      let acc = 0
      const bulk = n - ms // terms u < bulk have q = n - 1 - u >= ms: nothing to record
      for (let u = 0; u < bulk; u++) acc += work[rAt + u]! * work[rAt + u + c]!
      for (let u = bulk; u + c < n; u++) {
        acc += work[rAt + u]! * work[rAt + u + c]!
        work[pAt + c * ms + (n - 1 - u)] = acc
      }
    }
    // X_v[j] = sum_{t=j}^{n-1} r[t-j] v[t] for v = e(0), level column, trend column.
    // (Without a trend the trend column stays zero: errors() is not run for it.)
    if (!hasTrend) work.fill(0, tAt, tAt + n)
    for (let j = 0; j < ms; j++) {
      let xe = 0
      let xl = 0
      let xt = 0
      for (let t = j; t < n; t++) {
        const rv = work[rAt + t - j]!
        xe += rv * work[eAt + t]!
        xl += rv * work[lAt + t]!
        xt += rv * work[tAt + t]!
      }
      work[xAt + j] = xe
      work[xAt + ms + j] = xl
      work[xAt + 2 * ms + j] = xt
    }
    const rLastLast = lagged(work, pAt, ms, last, last)
    for (let j = 0; j < last; j++) {
      const i = first + j
      work[aAt + i * p] = work[xAt + ms + j]! - work[xAt + ms + last]!
      if (hasTrend) work[aAt + i * p + 1] = work[xAt + 2 * ms + j]! - work[xAt + 2 * ms + last]!
      const rjLast = lagged(work, pAt, ms, j, last)
      for (let k = 0; k <= j; k++) work[aAt + i * p + first + k] = lagged(work, pAt, ms, j, k) - rjLast - lagged(work, pAt, ms, last, k) + rLastLast
      work[rhsAt + i] = -(work[xAt + j]! - work[xAt + last]!)
    }
  }
  let trace = 0
  for (let i = 0; i < p; i++) trace += work[aAt + i * p + i]!
  const ridge = 1e-10 * (trace / p) + 1e-300
  for (let i = 0; i < p; i++) work[aAt + i * p + i]! += ridge
  // Cholesky (lower triangle in place), then two triangular solves.
  for (let i = 0; i < p; i++) {
    for (let k = 0; k <= i; k++) {
      let v = work[aAt + i * p + k]!
      for (let q = 0; q < k; q++) v -= work[aAt + i * p + q]! * work[aAt + k * p + q]!
      if (i === k) {
        if (!(v > 0)) return false
        work[aAt + i * p + i] = Math.sqrt(v)
      } else work[aAt + i * p + k] = v / work[aAt + k * p + k]!
    }
  }
  for (let i = 0; i < p; i++) {
    let v = work[rhsAt + i]!
    for (let q = 0; q < i; q++) v -= work[aAt + i * p + q]! * work[rhsAt + q]!
    work[rhsAt + i] = v / work[aAt + i * p + i]!
  }
  for (let i = p - 1; i >= 0; i--) {
    let v = work[rhsAt + i]!
    for (let q = i + 1; q < p; q++) v -= work[aAt + q * p + i]! * work[rhsAt + q]!
    work[rhsAt + i] = v / work[aAt + i * p + i]!
  }
  for (let i = 0; i < p; i++) if (!Number.isFinite(work[rhsAt + i])) return false
  out[0] = work[rhsAt]
  out[1] = hasTrend ? work[rhsAt + 1]! : 0
  let sum = 0
  for (let j = 0; j + 1 < ms; j++) {
    const v = work[rhsAt + first + j]!
    out[2 + j] = v
    sum += v
  }
  if (ms > 0) out[2 + ms - 1] = -sum
  return true
}
