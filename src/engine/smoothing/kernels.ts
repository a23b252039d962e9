/**
 * Allocation-free sums of squared one-step errors for the optimiser. Each kernel
 * is the recursion of recursions.ts specialised to one model shape, rearranged
 * algebraically so the loop-carried dependency chain is short (this roughly
 * halves the time per evaluation); test/engine/smoothing/kernels.test.ts keeps
 * them in step with recursions.ts. States carried: level l and pb = phi * trend.
 * Non-finite sums, or a non-positive multiplicative base, give +Infinity.
 */

/** Level only (SES): l = (1 - alpha) l + alpha y. Errors are summed from index `from`. */
export function sseLevel(y: Float64Array, alpha: number, level: number, from: number): number {
  let l = level
  let sse = 0
  const a1 = 1 - alpha
  for (let t = from; t < y.length; t++) {
    const yt = y[t]
    const e = yt - l
    sse += e * e
    l = a1 * l + alpha * yt
  }
  return Number.isFinite(sse) ? sse : Infinity
}

/** Level and (damped) trend, additive. */
export function sseTrend(y: Float64Array, alpha: number, beta: number, phi: number, level: number, trend: number): number {
  let l = level
  let pb = phi * trend
  let sse = 0
  const a1 = 1 - alpha
  const k = phi * alpha * beta
  for (let t = 0; t < y.length; t++) {
    const yt = y[t]
    const base = l + pb
    const e = yt - base
    sse += e * e
    l = a1 * base + alpha * yt
    // phi * trend[t] = phi * (phi b + alpha beta e)
    pb = phi * pb + k * yt - k * base
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
  let pb = phi * trend
  let sse = 0
  let j = 0
  const a1 = 1 - alpha
  const k = phi * alpha * beta
  for (let t = 0; t < y.length; t++) {
    const sj = s[j]
    const ys = y[t] - sj
    const base = l + pb
    const e = ys - base
    sse += e * e
    l = a1 * base + alpha * ys
    pb = phi * pb + k * ys - k * base
    s[j] = sj + gamma * e
    if (++j === m) j = 0
  }
  return Number.isFinite(sse) ? sse : Infinity
}

/**
 * Multiplicative seasonality. With q = alpha y / s[t-m]:
 *   l' = (1 - alpha) base + q,  phi b' = phi beta (q - alpha l + (1 - alpha) pb) + phi (1 - beta) pb.
 */
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
  let pb = phi * trend
  let sse = 0
  let j = 0
  const a1 = 1 - alpha
  const g1 = 1 - gamma
  const pbeta = phi * beta
  const cl = pbeta * alpha
  const cp = pbeta * a1 + phi * (1 - beta)
  for (let t = 0; t < y.length; t++) {
    const base = l + pb
    const sj = s[j]
    if (!(base > 0) || !(sj > 0)) return Infinity
    const yt = y[t]
    const e = yt - base * sj
    sse += e * e
    const q = (alpha * yt) / sj
    const lNew = a1 * base + q
    pb = pbeta * q - cl * l + cp * pb
    l = lNew
    s[j] = (gamma * yt) / base + g1 * sj
    if (++j === m) j = 0
  }
  return Number.isFinite(sse) ? sse : Infinity
}
