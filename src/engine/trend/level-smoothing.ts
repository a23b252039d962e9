/**
 * A small, local simple-exponential-smoothing kernel and a one-dimensional
 * minimiser, used by Theta and the seasonal-index model. (The smoothing family
 * has its own, richer implementation; this one stays minimal on purpose.)
 *
 * Recursion (NIST/SEMATECH e-Handbook 6.4.3.1 form):
 *   level[0] = x[0];  level[t] = alpha * x[t] + (1 - alpha) * level[t-1].
 * The one-step forecast of x[t] is level[t-1], so errors run over t = 1..n-1.
 */

/**
 * Weighted sum of squared one-step errors, sum over t >= 1 of (w[t] * (x[t] - level[t-1]))^2.
 * With weights omitted every w[t] is 1. O(n), no allocation.
 */
export function levelSse(x: readonly number[], alpha: number, weights?: readonly number[]): number {
  let level = x[0]!
  let sse = 0
  for (let t = 1; t < x.length; t++) {
    const e = x[t]! - level
    const we = weights === undefined ? e : e * weights[t]!
    sse += we * we
    level += alpha * e
  }
  return sse
}

/** The level after the whole series (the flat SES forecast). */
export function finalLevel(x: readonly number[], alpha: number): number {
  let level = x[0]!
  for (let t = 1; t < x.length; t++) level += alpha * (x[t]! - level)
  return level
}

/** Levels level[0..n-1]; level[t] is the one-step forecast of x[t+1]. */
export function levels(x: readonly number[], alpha: number): number[] {
  const out = new Array<number>(x.length)
  let level = x[0]!
  out[0] = level
  for (let t = 1; t < x.length; t++) {
    level += alpha * (x[t]! - level)
    out[t] = level
  }
  return out
}

const GRID_POINTS = 20
const GOLDEN = (Math.sqrt(5) - 1) / 2

/**
 * Minimise f on [lo, hi]: a grid of 21 points brackets the best cell (guards
 * against a second local minimum), then golden-section search refines it to
 * `tolerance` in x. Ties go to the smaller x. About 21 + 40 evaluations.
 */
export function minimiseOnInterval(
  f: (x: number) => number,
  lo: number,
  hi: number,
  tolerance = 1e-8,
): number {
  const step = (hi - lo) / GRID_POINTS
  let bestK = 0
  let bestF = f(lo)
  for (let k = 1; k <= GRID_POINTS; k++) {
    const v = f(k === GRID_POINTS ? hi : lo + k * step)
    if (v < bestF) {
      bestF = v
      bestK = k
    }
  }
  let bestX = bestK === GRID_POINTS ? hi : lo + bestK * step
  let a = Math.max(lo, bestX - step)
  let b = Math.min(hi, bestX + step)
  let c = b - GOLDEN * (b - a)
  let d = a + GOLDEN * (b - a)
  let fc = f(c)
  let fd = f(d)
  while (b - a > tolerance) {
    if (fc <= fd) {
      b = d
      d = c
      fd = fc
      c = b - GOLDEN * (b - a)
      fc = f(c)
    } else {
      a = c
      c = d
      fc = fd
      d = a + GOLDEN * (b - a)
      fd = f(d)
    }
  }
  const x = fc <= fd ? c : d
  const fx = Math.min(fc, fd)
  if (fx < bestF) bestX = x
  return bestX
}
