/**
 * Initial states of the multiplicative Holt-Winters models by Gauss-Newton steps with
 * the smoothing parameters fixed. Unlike the additive models (least-squares-states.ts),
 * the one-step errors are not affine in the initial states, so each step linearises
 * them, solves the small least-squares problem for the step, and halves it until the
 * error sum falls (Gauss-Newton with step halving; Nocedal and Wright 2006, sec. 10.3,
 * from memory). The Jacobian comes from derivatives carried through the recursion
 * (forward mode), and J'J and J'e are accumulated in the same pass, so no n-by-p matrix
 * is stored.
 * Unknowns x = [level, trend, s_0..s_{m-2}] (the trend fixed at 0 without a trend);
 * s_{m-1} = m - (s_0 + ... + s_{m-2}) keeps the seasonal states averaging one
 * (otherwise level and seasonal are not identified).
 * Allocation-free: the caller passes `multiplicativeWorkspace(m)` doubles.
 */

/** Doubles of workspace `multiplicativeStates` needs for season length m. */
export function multiplicativeWorkspace(m: number): number {
  const p = m + 1
  return p * p + (m + 9) * p + m
}

/** Error sum of the multiplicative recursion from states x; Infinity if not finite or a base <= 0. */
function errorSum(y: Float64Array, alpha: number, beta: number, gamma: number, phi: number, x: Float64Array, s: Float64Array): number {
  const m = s.length
  let sum = 0
  for (let j = 0; j + 1 < m; j++) {
    s[j] = x[2 + j]!
    sum += s[j]!
  }
  s[m - 1] = m - sum
  let l = x[0]!
  let b = x[1]!
  let j = 0
  let sse = 0
  for (let t = 0; t < y.length; t++) {
    const base = l + phi * b
    const sj = s[j]!
    if (!(base > 0) || !(sj > 0)) return Infinity
    const yt = y[t]!
    const e = yt - base * sj
    sse += e * e
    const lNew = (alpha * yt) / sj + (1 - alpha) * base
    b = beta * (lNew - l) + (1 - beta) * phi * b
    l = lNew
    s[j] = (gamma * yt) / base + (1 - gamma) * sj
    if (++j === m) j = 0
  }
  return Number.isFinite(sse) ? sse : Infinity
}

/**
 * Jacobian of the last `normalEquations` call, column-major (n per column): module
 * scratch grown on demand up to JACOBIAN_KEEP doubles (512 KiB); larger problems
 * (e.g. m = 365) get a buffer of their own per call, not kept.
 */
let jacobian = new Float64Array(0)
const JACOBIAN_KEEP = 1 << 16

/**
 * Fills A = J'J (lower triangle, p x p at aAt) and g = -J'e (at gAt) for states x, with
 * J the derivative of the errors with respect to x. Returns false if a state is invalid.
 * J is kept column by column (module scratch, reused across calls) and A is formed after
 * the pass by dot products over the rows where both columns are live, in time order:
 * the same additions in the same order as accumulating A row by row, with independent
 * accumulators instead of a read-modify-write of A per term (measured: about twice as fast).
 */
function normalEquations(
  y: Float64Array, alpha: number, beta: number, gamma: number, phi: number, hasTrend: boolean,
  x: Float64Array, s: Float64Array, w: Float64Array, aAt: number, gAt: number, tAt: number,
): boolean {
  const m = s.length
  const p = m + 1
  const n = y.length
  let J = jacobian
  if (J.length < n * p) {
    J = new Float64Array(n * p)
    if (n * p <= JACOBIAN_KEEP) jacobian = J
  }
  // Tangents (offsets into w, no views: a view is an allocation): dl (p) | db (p) |
  // ds (m * p, row j for state s_j), from tAt.
  const dl = tAt
  const db = tAt + p
  const ds = tAt + 2 * p
  w.fill(0, aAt, aAt + p * p)
  w.fill(0, gAt, gAt + p)
  w.fill(0, tAt, tAt + (2 + m) * p)
  w[dl] = 1
  if (hasTrend) w[db + 1] = 1
  let sum = 0
  for (let j = 0; j + 1 < m; j++) {
    s[j] = x[2 + j]!
    sum += s[j]!
    w[ds + j * p + 2 + j] = 1
    w[ds + (m - 1) * p + 2 + j] = -1
  }
  s[m - 1] = m - sum
  let l = x[0]!
  let b = x[1]!
  let j = 0
  const a1 = 1 - alpha
  const g1 = 1 - gamma
  const pb1 = (1 - beta) * phi
  // Columns 2..p-1 stay zero until their seasonal state is first used (t = column - 2);
  // the last state depends on all of them, so from t = m - 1 every column is live.
  // Column i is live from row first(i) = i < 2 ? 0 : min(i - 2, m - 2) on.
  let live = 2
  for (let t = 0; t < n; t++) {
    const base = l + phi * b
    const sj = s[j]!
    if (!(base > 0) || !(sj > 0)) return false
    const yt = y[t]!
    const e = yt - base * sj
    const cs = (alpha * yt) / (sj * sj) // -d lNew / d s_j
    const cb = (gamma * yt) / (base * base) // -d sNew / d base
    const row = ds + j * p
    if (live < p) live = t + 1 >= m - 1 ? p : Math.max(live, Math.min(p, t + 3))
    for (let i = 0; i < live; i++) {
      const dli = w[dl + i]!
      const dbi = w[db + i]!
      const dbase = dli + phi * dbi
      const dsj = w[row + i]!
      const di = -(dbase * sj + base * dsj)
      J[i * n + t] = di
      w[gAt + i]! -= di * e
      const dlNew = a1 * dbase - cs * dsj
      w[db + i] = beta * (dlNew - dli) + pb1 * dbi
      w[dl + i] = dlNew
      w[row + i] = g1 * dsj - cb * dbase
    }
    const lNew = (alpha * yt) / sj + a1 * base
    b = beta * (lNew - l) + pb1 * b
    l = lNew
    s[j] = (gamma * yt) / base + g1 * sj
    if (++j === m) j = 0
  }
  // A[i][k] (k <= i) = sum over t >= first(i) (the later start) of J[t][i] J[t][k], four k at a time.
  for (let i = 0; i < p; i++) {
    const ci = i * n
    const from = i < 2 ? 0 : Math.min(i - 2, m - 2)
    const at = aAt + i * p
    let k = 0
    for (; k + 3 <= i; k += 4) {
      const c0 = k * n
      const c1 = c0 + n
      const c2 = c1 + n
      const c3 = c2 + n
      let s0 = 0
      let s1 = 0
      let s2 = 0
      let s3 = 0
      for (let t = from; t < n; t++) {
        const v = J[ci + t]!
        s0 += v * J[c0 + t]!
        s1 += v * J[c1 + t]!
        s2 += v * J[c2 + t]!
        s3 += v * J[c3 + t]!
      }
      w[at + k] = s0
      w[at + k + 1] = s1
      w[at + k + 2] = s2
      w[at + k + 3] = s3
    }
    for (; k <= i; k++) {
      const ck = k * n
      let s0 = 0
      for (let t = from; t < n; t++) s0 += J[ci + t]! * J[ck + t]!
      w[at + k] = s0
    }
  }
  return true
}

/**
 * Up to `steps` Gauss-Newton steps from the states [level, trend, s_0..s_{m-1}] in `out`
 * (seasonal states averaging one), for these parameters; the improved states are
 * written back into `out`. Returns their error sum (Infinity, and `out` untouched,
 * when the start has none).
 */
export function multiplicativeStates(
  y: Float64Array, alpha: number, beta: number, gamma: number, phi: number,
  hasTrend: boolean, steps: number, work: Float64Array, out: Float64Array,
): number {
  const m = out.length - 2
  const p = m + 1
  // Workspace: A (p * p) | g, x, trial, d (p each) | tangents ((m + 3) * p) | s (m).
  const aAt = 0
  const gAt = p * p
  const xAt = gAt + p
  const trialAt = xAt + p
  const dAt = trialAt + p
  const tAt = dAt + p
  const s = work.subarray(tAt + (m + 3) * p, tAt + (m + 3) * p + m)
  const x = work.subarray(xAt, xAt + p)
  const trial = work.subarray(trialAt, trialAt + p)
  for (let i = 0; i < p; i++) x[i] = out[i]!
  let current = errorSum(y, alpha, beta, gamma, phi, x, s)
  if (!Number.isFinite(current)) return current
  for (let step = 0; step < steps; step++) {
    if (!normalEquations(y, alpha, beta, gamma, phi, hasTrend, x, s, work, aAt, gAt, tAt)) break
    // (J'J + ridge) d = -J'e by Cholesky (lower triangle in place).
    let trace = 0
    for (let i = 0; i < p; i++) trace += work[aAt + i * p + i]!
    const ridge = 1e-10 * (trace / p) + 1e-300
    for (let i = 0; i < p; i++) work[aAt + i * p + i]! += ridge
    let ok = true
    for (let i = 0; i < p && ok; i++) {
      for (let k = 0; k <= i; k++) {
        let v = work[aAt + i * p + k]!
        for (let q = 0; q < k; q++) v -= work[aAt + i * p + q]! * work[aAt + k * p + q]!
        if (i === k) {
          if (!(v > 0)) {
            ok = false
            break
          }
          work[aAt + i * p + i] = Math.sqrt(v)
        } else work[aAt + i * p + k] = v / work[aAt + k * p + k]!
      }
    }
    if (!ok) break
    for (let i = 0; i < p; i++) {
      let v = work[gAt + i]!
      for (let q = 0; q < i; q++) v -= work[aAt + i * p + q]! * work[dAt + q]!
      work[dAt + i] = v / work[aAt + i * p + i]!
    }
    for (let i = p - 1; i >= 0; i--) {
      let v = work[dAt + i]!
      for (let q = i + 1; q < p; q++) v -= work[aAt + q * p + i]! * work[dAt + q]!
      work[dAt + i] = v / work[aAt + i * p + i]!
    }
    let accepted = false
    for (let f = 1; f >= 1 / 16 && !accepted; f /= 2) {
      for (let i = 0; i < p; i++) trial[i] = x[i]! + f * work[dAt + i]!
      const v = errorSum(y, alpha, beta, gamma, phi, trial, s)
      if (v < current) {
        x.set(trial)
        current = v
        accepted = true
      }
    }
    if (!accepted) break
  }
  let sum = 0
  for (let i = 0; i < p; i++) out[i] = x[i]!
  for (let j = 0; j + 1 < m; j++) sum += x[2 + j]!
  out[1 + m] = m - sum
  return current
}
