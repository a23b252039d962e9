/**
 * Allocation-free sums of squared one-step errors for the optimiser. Each kernel
 * is the recursion of recursions.ts specialised to one model shape (kept in step
 * with it by test/engine/smoothing/kernels.test.ts). Non-finite states or a
 * non-positive multiplicative base return +Infinity.
 */

/** Level only (SES). Errors are summed from index `from`. */
export function sseLevel(y: Float64Array, alpha: number, level: number, from: number): number {
  let l = level
  let sse = 0
  for (let t = from; t < y.length; t++) {
    const e = y[t] - l
    sse += e * e
    l += alpha * e
  }
  return Number.isFinite(sse) ? sse : Infinity
}

/** Level and (damped) trend. */
export function sseTrend(y: Float64Array, alpha: number, beta: number, phi: number, level: number, trend: number): number {
  let l = level
  let b = trend
  let sse = 0
  const ab = alpha * beta
  for (let t = 0; t < y.length; t++) {
    const base = l + phi * b
    const e = y[t] - base
    sse += e * e
    // level[t] - level[t-1] = phi * b + alpha * e
    l = base + alpha * e
    b = phi * b + ab * e
  }
  return Number.isFinite(sse) ? sse : Infinity
}

/** Additive seasonality; `s` is scratch of length m, filled from `s0`. */
export function sseSeasonalAdd(
  y: Float64Array,
  alpha: number,
  beta: number,
  gamma: number,
  phi: number,
  level: number,
  trend: number,
  s0: Float64Array,
  s: Float64Array,
): number {
  s.set(s0)
  const m = s.length
  let l = level
  let b = trend
  let sse = 0
  let j = 0
  const ab = alpha * beta
  for (let t = 0; t < y.length; t++) {
    const base = l + phi * b
    const sj = s[j]
    const e = y[t] - base - sj
    sse += e * e
    l = base + alpha * e
    b = phi * b + ab * e
    s[j] = sj + gamma * e
    if (++j === m) j = 0
  }
  return Number.isFinite(sse) ? sse : Infinity
}

/** Multiplicative seasonality (component form as recursions.ts). */
export function sseSeasonalMul(
  y: Float64Array,
  alpha: number,
  beta: number,
  gamma: number,
  phi: number,
  level: number,
  trend: number,
  s0: Float64Array,
  s: Float64Array,
): number {
  s.set(s0)
  const m = s.length
  let l = level
  let b = trend
  let sse = 0
  let j = 0
  const a1 = 1 - alpha
  const g1 = 1 - gamma
  const b1 = 1 - beta
  for (let t = 0; t < y.length; t++) {
    const base = l + phi * b
    const sj = s[j]
    if (!(base > 0) || !(sj > 0)) return Infinity
    const yt = y[t]
    const e = yt - base * sj
    sse += e * e
    const lNew = (alpha * yt) / sj + a1 * base
    b = beta * (lNew - l) + b1 * phi * b
    s[j] = (gamma * yt) / base + g1 * sj
    l = lNew
    if (++j === m) j = 0
  }
  return Number.isFinite(sse) ? sse : Infinity
}
