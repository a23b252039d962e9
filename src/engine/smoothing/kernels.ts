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
    const yt = y[t]!
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
    const yt = y[t]!
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
    const sj = s[j]!
    const ys = y[t]! - sj
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
    const sj = s[j]!
    if (!(base > 0) || !(sj > 0)) return Infinity
    const yt = y[t]!
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

/**
 * Level and (damped) trend with the initial states profiled out: the smallest error sum
 * over all initial level and trend for these parameters. The errors are affine in the
 * initial states (e = e_y + level * e_l + trend * e_b, with e_y the errors from zero
 * states and e_l, e_b the responses to a unit level and trend on y = 0), so the minimum
 * is e_y'e_y - g'A^{-1}g with A = J'J, g = J'e_y, J = [e_l e_b]; all three recursions run
 * in one pass. Writes the minimising [level, trend] into `states` when given.
 * A singular A (e.g. a very short series) falls back to the level alone.
 */
export function sseTrendProfiled(y: Float64Array, alpha: number, beta: number, phi: number, states?: Float64Array): number {
  const k = phi * alpha * beta
  const a1 = 1 - alpha
  let ly = 0
  let py = 0
  let l1 = 1
  let p1 = 0
  let l2 = 0
  let p2 = phi
  let yy = 0
  let a11 = 0
  let a12 = 0
  let a22 = 0
  let g1 = 0
  let g2 = 0
  for (let t = 0; t < y.length; t++) {
    // As sseTrend: l' = (1 - alpha) base + alpha y, pb' = phi pb + k y - k base, so each
    // step's dependency chain is base -> product -> sum (the responses run on y = 0).
    const yt = y[t]!
    const by = ly + py
    const b1 = l1 + p1
    const b2 = l2 + p2
    const ey = yt - by
    yy += ey * ey
    a11 += b1 * b1
    a12 += b1 * b2
    a22 += b2 * b2
    g1 -= b1 * ey
    g2 -= b2 * ey
    ly = a1 * by + alpha * yt
    py = phi * py + k * yt - k * by
    l1 = a1 * b1
    p1 = phi * p1 - k * b1
    l2 = a1 * b2
    p2 = phi * p2 - k * b2
  }
  const det = a11 * a22 - a12 * a12
  let level: number
  let trend: number
  if (det > 1e-12 * a11 * a22) {
    level = -(a22 * g1 - a12 * g2) / det
    trend = -(a11 * g2 - a12 * g1) / det
  } else {
    level = a11 > 0 ? -g1 / a11 : 0
    trend = 0
  }
  if (states) {
    states[0] = level
    states[1] = trend
  }
  const sse = yy + level * g1 + trend * g2
  return Number.isFinite(sse) ? Math.max(0, sse) : Infinity
}
