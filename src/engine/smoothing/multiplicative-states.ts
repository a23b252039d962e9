/**
 * Initial states of the multiplicative Holt-Winters models by Gauss-Newton steps with
 * the smoothing parameters fixed. Unlike the additive models (least-squares-states.ts),
 * the one-step errors are not affine in the initial states, so each step linearises
 * them with a forward-difference Jacobian, solves the small least-squares problem for
 * the step, and halves it until the error sum falls (Gauss-Newton with step halving;
 * Nocedal and Wright 2006, sec. 10.3, from memory).
 * Unknowns: level, trend (fixed at 0 without a trend), s_0..s_{m-2};
 * s_{m-1} = m - (s_0 + ... + s_{m-2}) keeps the seasonal states averaging one
 * (otherwise level and seasonal are not identified).
 * Allocation-free: the caller passes `multiplicativeWorkspace(n, m)` doubles.
 */

/** Doubles of workspace `multiplicativeStates` needs for n points and season length m. */
export function multiplicativeWorkspace(n: number, m: number): number {
  const p = m + 1
  return (p + 1) * n + p * p + 4 * p + m
}

/** Errors of the multiplicative recursion for states x = [l, b, s_0..s_{m-2}] into out[offset..]; their sum of squares, Infinity if not finite or a base <= 0. */
function residuals(
  y: Float64Array, alpha: number, beta: number, gamma: number, phi: number,
  x: Float64Array, s: Float64Array, out: Float64Array, offset: number,
): number {
  const m = s.length
  let sum = 0
  for (let j = 0; j + 1 < m; j++) {
    s[j] = x[2 + j]
    sum += s[j]
  }
  s[m - 1] = m - sum
  let l = x[0]
  let b = x[1]
  let j = 0
  let sse = 0
  for (let t = 0; t < y.length; t++) {
    const base = l + phi * b
    const sj = s[j]
    if (!(base > 0) || !(sj > 0)) return Infinity
    const yt = y[t]
    const e = yt - base * sj
    out[offset + t] = e
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
 * Up to `steps` Gauss-Newton steps from the states [level, trend, s_0..s_{m-1}] in `out`
 * (seasonal states averaging one), for these parameters; the improved states are
 * written back into `out`. Returns their error sum (Infinity, and `out` untouched,
 * when the start has none).
 */
export function multiplicativeStates(
  y: Float64Array, alpha: number, beta: number, gamma: number, phi: number,
  hasTrend: boolean, steps: number, work: Float64Array, out: Float64Array,
): number {
  const n = y.length
  const m = out.length - 2
  const p = m + 1
  // Workspace layout: e (n) | Jacobian columns (p * n) | A (p * p) | g, x, trial, d (p each) | s (m).
  const jAt = n
  const aAt = (p + 1) * n
  const gAt = aAt + p * p
  const x = work.subarray(gAt + p, gAt + 2 * p)
  const trial = work.subarray(gAt + 2 * p, gAt + 3 * p)
  const d = work.subarray(gAt + 3 * p, gAt + 4 * p)
  const s = work.subarray(gAt + 4 * p, gAt + 4 * p + m)
  for (let i = 0; i < p; i++) x[i] = out[i]
  let current = residuals(y, alpha, beta, gamma, phi, x, s, work, 0)
  if (!Number.isFinite(current)) return current
  const a = (i: number, k: number): number => aAt + i * p + k
  for (let step = 0; step < steps; step++) {
    // Forward-difference Jacobian; column i at jAt + i * n.
    for (let i = 0; i < p; i++) {
      const col = jAt + i * n
      if (i === 1 && !hasTrend) {
        work.fill(0, col, col + n) // no trend: its step solves to zero
        continue
      }
      trial.set(x)
      const h = 1e-7 * Math.max(Math.abs(x[i]), i === 1 ? Math.abs(x[0]) : 1e-3)
      trial[i] += h
      if (!Number.isFinite(residuals(y, alpha, beta, gamma, phi, trial, s, work, col))) return finish()
      for (let t = 0; t < n; t++) work[col + t] = (work[col + t] - work[t]) / h
    }
    // Normal equations (J'J + ridge) d = -J'e, solved by Cholesky.
    let trace = 0
    for (let i = 0; i < p; i++) {
      const ci = jAt + i * n
      for (let k = 0; k <= i; k++) {
        const ck = jAt + k * n
        let v = 0
        for (let t = 0; t < n; t++) v += work[ci + t] * work[ck + t]
        work[a(i, k)] = v
      }
      let g = 0
      for (let t = 0; t < n; t++) g += work[ci + t] * work[t]
      work[gAt + i] = -g
      trace += work[a(i, i)]
    }
    const ridge = 1e-10 * (trace / p) + 1e-300
    for (let i = 0; i < p; i++) work[a(i, i)] += ridge
    for (let i = 0; i < p; i++) {
      for (let k = 0; k <= i; k++) {
        let v = work[a(i, k)]
        for (let q = 0; q < k; q++) v -= work[a(i, q)] * work[a(k, q)]
        if (i === k) {
          if (!(v > 0)) return finish()
          work[a(i, i)] = Math.sqrt(v)
        } else work[a(i, k)] = v / work[a(k, k)]
      }
    }
    for (let i = 0; i < p; i++) {
      let v = work[gAt + i]
      for (let q = 0; q < i; q++) v -= work[a(i, q)] * d[q]
      d[i] = v / work[a(i, i)]
    }
    for (let i = p - 1; i >= 0; i--) {
      let v = d[i]
      for (let q = i + 1; q < p; q++) v -= work[a(q, i)] * d[q]
      d[i] = v / work[a(i, i)]
    }
    let accepted = false
    for (let f = 1; f >= 1 / 16 && !accepted; f /= 2) {
      for (let i = 0; i < p; i++) trial[i] = x[i] + f * d[i]
      const v = residuals(y, alpha, beta, gamma, phi, trial, s, work, 0)
      if (v < current) {
        x.set(trial)
        current = v
        accepted = true
      }
    }
    // An accepted trial was evaluated last, so e holds its errors; otherwise stop here.
    if (!accepted) break
  }
  return finish()

  function finish(): number {
    let sum = 0
    for (let i = 0; i < p; i++) out[i] = x[i]
    for (let j = 0; j + 1 < m; j++) sum += x[2 + j]
    out[1 + m] = m - sum
    return current
  }
}
